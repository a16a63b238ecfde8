/** The follow-ups a workflow command or a payment reaction leaves for after the commit (run by ./effects.ts). */
import type { Notice } from "../services/notices";
import type { MoneyBack } from "../payments/holds";
import type { CancelReason } from "../payments/stripe-calls";

export type Effect =
  | { kind: "notify"; to: readonly string[]; notice: Notice }
  | { kind: "announce"; caseId: string }
  | { kind: "capture"; caseId: string }
  | { kind: "release"; paymentId: string; reason: CancelReason }
  | { kind: "returnMoney"; caseId: string; reason: CancelReason; note?: string }
  | { kind: "expireCheckout"; paymentId: string; why: string }
  | { kind: "releaseStrayHolds"; caseId: string }
  | { kind: "publish"; caseId: string };

/** What the effects came to, for the commands whose answer reports it. */
export interface AfterCommit {
  /** capture: whether the held money was captured */
  captured?: boolean;
  /** returnMoney: what was given back, or why nothing was */
  moneyBack?: MoneyBack;
}
