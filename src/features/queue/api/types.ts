import type { QueueItem, QueueView } from "../../../../shared/views/queue";
export type { QueueItem, QueueView };

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
