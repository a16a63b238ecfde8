import type { CaseStatus } from "../../../../shared/domain/case-status";

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

export interface PaymentView {
  id: string;
  status: "creating" | "pending" | "failed" | "expired" | "authorized" | "captured" | "released" | "refunded";
  tier: string;
  tierLabel: string;
  amountCents: number;
  currency: string;
  deadlineMinutes: number;
  checkoutUrl: string | null;
  message: string | null;
  cardBrand: string | null;
  cardLast4: string | null;
  authorizedAt: string | null;
  capturedAt: string | null;
  releasedAt: string | null;
  refundedAt: string | null;
  receiptNumber: string | null;
}

export interface AnswerView {
  id: string;
  round: number;
  expertName: string | null;
  diagnosis: string;
  rootCause: string;
  recommendedFix: string;
  testsToConfirm: string;
  safetyNote: string;
  createdAt: string;
}

export interface ConfirmationView {
  id: string;
  fixed: boolean;
  note: string | null;
  rating: number | null;
  userName: string | null;
  createdAt: string;
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
