import type { CaseStatus, VehicleSystem } from "../../../../shared/domain/case-status";

/** What the server returns for a case's vehicle. Blank optional values come back as null. */
export interface CaseVehicle {
  vin: string | null;
  vinCheckOverride?: boolean;
  year: number | null;
  make: string | null;
  model: string | null;
  engine: string | null;
  fuel: string | null;
  mileage: number | null;
  mileageUnit: "km" | "mi" | null;
  transmission: string | null;
}

export interface CaseConditions {
  temperature?: string | null;
  load?: string[] | null;
  occurrence?: string | null;
}

/** A trace's channel as the server presents it (shared/trace/types TraceChannelMeta). */
export type { TraceChannelMeta } from "../../../../shared/trace/types";
import type { TraceChannelMeta } from "../../../../shared/trace/types";

/** A trouble code as the server presents it (older answers may give the bare code). */
export interface PresentedCode {
  code: string;
  description: string | null;
  system?: string | null;
  generic?: boolean | null;
  group?: string;
  misfireCylinder?: number;
  coil?: string;
}
export type CaseCode = string | PresentedCode;

/** The codes as plain strings, whichever form the server sent. */
export const codeStrings = (codes: CaseCode[] | null | undefined): string[] => (codes ?? []).map((c) => (typeof c === "string" ? c : c.code));

/** One trace as listed on its case (the plot fetches its points separately). */
export interface CaseTrace {
  id: string;
  name: string;
  samples: number;
  sampleRateHz: number;
  durationS: number;
  t0?: number;
  channels: TraceChannelMeta[];
  settings: Record<string, unknown>;
  kind: string;
  /** computed once at upload (shared/analysis); null while missing */
  analysis: unknown;
  warnings?: string[];
  bytes?: number;
  originalUrl?: string;
  createdAt?: string | number;
}

export interface CasePhoto {
  id: string;
  name: string;
  mime: string;
  bytes: number;
  url?: string;
  createdAt?: string | number;
}

/** GET /api/cases/:id */
export interface CaseDetail {
  id: string;
  status: CaseStatus;
  title?: string;
  vehicle: CaseVehicle;
  vinWarnings?: { code: string; message: string; expected?: string }[];
  complaint: string | null;
  codes: CaseCode[] | null;
  system: VehicleSystem | null;
  symptoms: string[] | null;
  conditions: CaseConditions | null;
  testsDone: string | null;
  partsReplaced: string | null;
  notes: string | null;
  createdAt?: string | number;
  updatedAt?: string | number;
  traces: CaseTrace[];
  photos: CasePhoto[];
  /** what the complete-case schema still misses (server-computed) */
  readiness?: { complete: boolean; issues: { path: string; message: string }[] };
  /** what the signed-in user may do here, computed by the server's policy */
  abilities?: Partial<Record<"read" | "edit" | "addTrace" | "deleteTrace" | "addPhoto" | "deletePhoto", boolean>> & Record<string, boolean | undefined>;
  /** cross-trace comparison, when the server provides it */
  comparison?: unknown;
}

/** One row of GET /api/cases */
export interface CaseListItem {
  id: string;
  status: CaseStatus;
  title?: string;
  vehicle: Partial<CaseVehicle> | null;
  complaint: string | null;
  codes: CaseCode[] | null;
  system?: string | null;
  traceCount?: number;
  photoCount?: number;
  createdAt?: string | number;
  updatedAt?: string | number;
}

export interface CaseList {
  total: number;
  items: CaseListItem[];
}

/** The server's answer to POST /api/cases */
export interface CaseCreated {
  id: string;
  status: CaseStatus;
}
