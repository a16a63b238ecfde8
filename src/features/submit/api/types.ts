import type { CaseStatus } from "../../../../shared/domain/case-status";
import type { PaymentView, AnswerView, ConfirmationView } from "../../../../shared/views/queue";
export type { PaymentView, AnswerView, ConfirmationView };

export interface Tier {
  id: string;
  label: string;
  description: string | null;
  priceCents: number;
  deadlineMinutes: number;
  active: boolean;
}

export interface PublicPricing {
  currency: string;
  tiers: Tier[];
}




export type WorkflowAbilities = Record<
  "read" | "history" | "submit" | "withdraw" | "claim" | "release" | "requestData" | "dataSent" | "answer" | "confirm" | "refund",
  boolean
>;

/** GET /api/cases/:id/workflow */
export interface Workflow {
  id: string;
  status: CaseStatus;
  deadlineAt: string | null;
  expertId: string | null;
  claimedAt: string | null;
  tier: string | null;
  priceCents: number | null;
  expert: { id: string; name: string } | null;
  payment: PaymentView | null;
  paymentMessage: string | null;
  needsDataMessage: string | null;
  notFixedCount: number;
  answers: AnswerView[];
  confirmations: ConfirmationView[];
  pricing: PublicPricing | null;
  abilities: WorkflowAbilities;
}

export interface HistoryEntry {
  id: number;
  type: string;
  actorName: string | null;
  actorRole: string | null;
  fromStatus: string | null;
  toStatus: string | null;
  data: Record<string, unknown> | null;
  at: string;
}
