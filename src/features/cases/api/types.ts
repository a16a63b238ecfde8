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

export interface TraceChannelMeta {
  name: string;
  unit: string | null;
  min: number;
  max: number;
}

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
  vehicle: CaseVehicle;
  complaint: string | null;
  codes: string[] | null;
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
  /** what the signed-in user may do here, computed by the server's policy */
  abilities?: Record<string, boolean>;
  /** cross-trace comparison, when the server provides it */
  comparison?: unknown;
}

/** One row of GET /api/cases */
export interface CaseListItem {
  id: string;
  status: CaseStatus;
  vehicle: Partial<CaseVehicle> | null;
  complaint: string | null;
  codes: string[] | null;
  traceCount?: number;
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
