/**
 * Response shapes of the paid workflow's endpoints (docs/api.md "Queue and payments"), built by the
 * server's presenters (which `satisfies` them) and read by the client. Times are ISO strings; money
 * is integer cents.
 */
import type { CaseStatus } from "../domain/case-status";
import type { AnswerView, ConfirmationView, PaymentView } from "./queue";

/** The answer of claim, release, request-data and data-sent. */
export interface CaseStateView {
  id: string;
  status: CaseStatus;
  deadlineAt: string | null;
  expertId: string | null;
  claimedAt: string | null;
}

export type WorkflowAbility =
  | "read"
  | "history"
  | "submit"
  | "withdraw"
  | "claim"
  | "release"
  | "reassign"
  | "requestData"
  | "dataSent"
  | "answer"
  | "confirm"
  | "refund"
  | "viewPayment"
  | "deleteDraft";
export type WorkflowAbilities = Record<WorkflowAbility, boolean>;

export interface TierView {
  id: string;
  label: string;
  description: string | null;
  priceCents: number;
  deadlineMinutes: number;
  active: boolean;
}

/** GET /api/pricing */
export interface PublicPricingView {
  currency: string;
  tiers: TierView[];
}

/** GET /api/cases/:id/workflow */
export interface WorkflowView extends CaseStateView {
  tier: string | null;
  priceCents: number | null;
  expert: { id: string; name: string } | null;
  payment: PaymentView | null;
  paymentMessage: string | null;
  needsDataMessage: string | null;
  notFixedCount: number;
  answers: AnswerView[];
  confirmations: ConfirmationView[];
  pricing: PublicPricingView | null;
  /** the shop that opened the case (the desk's admins look after every shop's cases) */
  shopId: string;
  shopName: string | null;
  /** a resolved case's casebook entry, once published (and not hidden) */
  casebookEntryId: string | null;
  abilities: WorkflowAbilities;
}

export interface HistoryEntryView {
  id: number;
  type: string;
  actorId: string | null;
  actorName: string | null;
  actorRole: string | null;
  fromStatus: string | null;
  toStatus: string | null;
  data: Record<string, unknown> | null;
  at: string;
}

/** GET /api/cases/:id/history */
export interface HistoryView {
  caseId: string;
  status: CaseStatus;
  items: HistoryEntryView[];
}

/** GET /api/cases/:id/payment */
export interface CasePaymentView {
  caseId: string;
  status: CaseStatus;
  deadlineAt: string | null;
  payment: PaymentView | null;
}

/** POST /api/cases/:id/submit */
export interface CheckoutView {
  checkoutUrl: string;
  paymentId: string;
  tier: string;
  amountCents: number;
  currency: string;
  deadlineMinutes: number;
}

/** POST /api/cases/:id/withdraw */
export interface WithdrawnView {
  id: string;
  status: CaseStatus;
  payment: PaymentView | null;
}

/** POST /api/cases/:id/answer */
export interface AnsweredView {
  id: string;
  status: CaseStatus;
  captured: boolean;
  answer: AnswerView;
}

/** POST /api/cases/:id/confirm */
export interface ConfirmedView {
  id: string;
  status: CaseStatus;
  outcome: "resolved" | "reopened" | "closed";
}

/** PUT /api/queue/availability */
export interface AvailabilityView {
  available: boolean;
}

/** DELETE /api/cases/:id (drafts) */
export interface DeletedDraftView {
  id: string;
  deleted: true;
  traces: number;
  photos: number;
}
