import type { CaseStatus } from "../../../../shared/domain/case-status";
import type { CaseListView, CaseSummaryView, CaseView } from "../../../../shared/views/case";

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
export const codeStrings = (codes: CaseCode[] | null | undefined): string[] =>
  (codes ?? []).map((c) => (typeof c === "string" ? c : c.code));

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

/** GET /api/cases/:id (the server's shape: shared/views/case.ts) */
export type CaseDetail = CaseView<CaseTrace, CasePhoto>;

/** One row of GET /api/cases */
export type CaseListItem = CaseSummaryView;

export type CaseList = CaseListView;

/** The server's answer to POST /api/cases */
export interface CaseCreated {
  id: string;
  status: CaseStatus;
}
