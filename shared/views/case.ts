/**
 * Response shapes of the case endpoints (docs/api.md "Cases and traces"), built by
 * server/services/cases.ts (which `satisfies` them) and read by the client. The trace, photo and
 * comparison parts are typed by their own areas; times are ISO strings.
 */
import type { CaseStatus, VehicleSystem } from "../domain/case-status";
import type { CaseReadiness } from "../domain/case-readiness";
import type { VinDecoded } from "../domain/vin";
import type { CaseWaiting, DeadlineRisk, UnreadView } from "./desk";

export interface CaseVehicleView {
  vin: string | null;
  vinCheckOverride: boolean;
  year: number | null;
  make: string | null;
  model: string | null;
  engine: string | null;
  fuel: string | null;
  mileage: number | null;
  mileageUnit: "km" | "mi" | null;
  transmission: string | null;
}

/** A trouble code with what the bundled table says about it (`description` null outside the table). */
export interface PresentedCode {
  code: string;
  description: string | null;
  system: string | null;
  generic: boolean | null;
  group?: string;
  misfireCylinder?: number;
  coil?: string;
}

/** When the fault shows (the draft may leave any of them out). */
export interface CaseConditionsView {
  temperature?: string | null;
  load?: string[] | null;
  occurrence?: string | null;
}

export interface CaseDatesView {
  createdAt: string;
  updatedAt: string;
  submittedAt: string | null;
  claimedAt: string | null;
  deadlineAt: string | null;
}

/** One row of GET /api/cases */
export interface CaseSummaryView extends CaseDatesView {
  id: string;
  status: CaseStatus;
  title: string;
  shopId: string;
  vehicle: CaseVehicleView;
  complaint: string | null;
  codes: PresentedCode[];
  system: VehicleSystem | null;
  traceCount: number;
  photoCount: number;
  /** the shop's name (admins see every shop's cases) */
  shopName: string | null;
  /** the expert the case is with, once claimed */
  expert: { id: string; name: string } | null;
  /** new chat messages and marks by others since the reader last had the live review open */
  unread: UnreadView;
  /** what the case waits on, said to the reader */
  waiting: CaseWaiting;
  /** queued and claimed cases: how the answer deadline stands (null: no running deadline) */
  deadlineRisk: DeadlineRisk | null;
}

/** GET /api/cases */
export interface CaseListView {
  total: number;
  page: number;
  pageSize: number;
  items: CaseSummaryView[];
}

export interface CaseAbilitiesView {
  read: boolean;
  edit: boolean;
  addTrace: boolean;
  deleteTrace: boolean;
  addPhoto: boolean;
  deletePhoto: boolean;
}

/** GET /api/cases/:id (and the answer of POST and PATCH) */
export interface CaseView<Trace = unknown, Photo = unknown, Comparison = unknown> extends CaseDatesView {
  id: string;
  status: CaseStatus;
  title: string;
  shopId: string;
  createdBy: string | null;
  expertId: string | null;
  vehicle: CaseVehicleView;
  vinDecoded: VinDecoded | null;
  vinWarnings: { code: string; message: string; expected?: string }[];
  complaint: string | null;
  codes: PresentedCode[];
  system: VehicleSystem | null;
  symptoms: string[];
  conditions: CaseConditionsView;
  testsDone: string | null;
  partsReplaced: string | null;
  notes: string | null;
  tier: string | null;
  priceCents: number | null;
  readiness: CaseReadiness;
  traces: Trace[];
  photos: Photo[];
  comparison: Comparison | null;
  abilities: CaseAbilitiesView;
}
