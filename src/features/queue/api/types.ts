export interface QueueItem {
  id: string;
  label: string;
  vehicle: { year: number | null; make: string | null; model: string | null; engine: string | null };
  system: string | null;
  codes: string[];
  complaint: string | null;
  tier: string | null;
  priceCents: number | null;
  expertShareCents: number | null;
  currency: string;
  deadlineAt: string | null;
  queuedAt: string | null;
  status: string;
  offered: boolean;
  offerRank: number | null;
  offerWave: number | null;
  traceCount: number;
}

export interface QueueView {
  offers: QueueItem[];
  queue: QueueItem[];
  mine: QueueItem[];
  me: { available: boolean; openCases: number; maxOpenCases: number; status: string } | null;
}

/** The part of GET /api/cases/:id/workflow the expert's controls use. */
export interface ExpertWorkflow {
  id: string;
  status: string;
  deadlineAt: string | null;
  expertId: string | null;
  needsDataMessage: string | null;
  notFixedCount: number;
  abilities: { claim: boolean; release: boolean; requestData: boolean; answer: boolean };
}
