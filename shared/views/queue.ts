/**
 * Response shapes of the queue, payment, answer and notification endpoints, shared by the server
 * (which builds them) and the client (which reads them). Times are ISO strings; money is integer cents.
 */

export type PaymentStatus =
  "creating" | "pending" | "failed" | "expired" | "authorized" | "captured" | "released" | "refunded";

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

export interface PaymentView {
  id: string;
  status: PaymentStatus;
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

/** Who sold the service, as printed on receipts (configured: SELLER_NAME, SELLER_ADDRESS, SELLER_TAX_ID). */
export interface SellerView {
  name: string;
  address: string;
  taxId: string;
}

/** The tax included in a receipt's price (prices always include tax). */
export interface ReceiptTaxView {
  label: string;
  /** the rate in basis points (750 = 7.5 %) */
  basisPoints: number;
  /** the part of the amount charged that is tax */
  cents: number;
  pricesIncludeTax: true;
}

export interface ReceiptView {
  receiptNumber: string;
  seller: SellerView;
  tax: ReceiptTaxView | null;
  shopName: string;
  caseId: string;
  caseLabel: string;
  tierLabel: string;
  amountCents: number;
  refundedCents: number;
  currency: string;
  status: string;
  cardBrand: string | null;
  cardLast4: string | null;
  authorizedAt: string | null;
  capturedAt: string | null;
  refundedAt: string | null;
}

export interface AnswerView {
  id: string;
  round: number;
  expertId: string | null;
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
  answerId: string | null;
  fixed: boolean;
  note: string | null;
  rating: number | null;
  userName: string | null;
  createdAt: string;
}

export interface NotificationView {
  id: string;
  kind: string;
  caseId: string | null;
  title: string;
  body: string;
  link: string | null;
  /** how many happenings the notice stands for (new messages or marks fold into one) */
  count: number;
  read: boolean;
  createdAt: string;
}
