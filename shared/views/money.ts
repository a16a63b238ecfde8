/**
 * Response shapes of the money endpoints (billing, receipts, refunds, the ledger, earnings and
 * payouts), built by server/payments and read by the client. Money is integer cents.
 */
import type { CaseStatus } from "../domain/case-status";
import type { PaymentView } from "./queue";

export interface BillingPaymentView extends PaymentView {
  caseId: string;
  caseLabel: string;
  createdAt: string;
}

/** GET /api/billing */
export interface BillingView {
  currency: string;
  totals: { chargedCents: number; refundedCents: number; heldCents: number };
  payments: BillingPaymentView[];
}

/** The ledger's balance rule (authorised = captured + released + held; captured − refunded = desk + experts). */
export interface LedgerBalanceView {
  authorizedCents: number;
  capturedCents: number;
  releasedCents: number;
  /** open holds: payments still `authorized` */
  heldCents: number;
  refundedCents: number;
  deskShareCents: number;
  expertEarningsCents: number;
  payoutCents: number;
  balanced: boolean;
  problems: string[];
}

/** POST /api/admin/cases/:id/refund */
export interface RefundView {
  id: string;
  status: CaseStatus;
  payment: PaymentView;
  balance: LedgerBalanceView;
}

export interface EarningCaseView {
  caseId: string;
  label: string;
  capturedAt: string;
  grossCents: number;
  deskCents: number;
  expertCents: number;
  reversedCents: number;
  status: string;
}

export interface PayoutView {
  id: string;
  amountCents: number;
  currency: string;
  status: string;
  transferId: string | null;
  createdAt: string;
  paidAt: string | null;
  failureMessage: string | null;
}

/** GET /api/earnings */
export interface EarningsView {
  currency: string;
  totals: {
    earnedCents: number;
    reversedCents: number;
    paidCents: number;
    pendingPayoutCents: number;
    unpaidCents: number;
  };
  cases: EarningCaseView[];
  payouts: PayoutView[];
}

/** GET /api/admin/payouts */
export interface PayoutOverviewView {
  experts: { expertId: string; name: string; unpaidCents: number; paidCents: number }[];
}

/** POST /api/admin/payouts */
export interface PayoutRunView {
  payouts: {
    id: string;
    expertId: string;
    amountCents: number;
    currency: string;
    status: string;
    transferId: string | null;
    failureMessage: string | null;
  }[];
}
