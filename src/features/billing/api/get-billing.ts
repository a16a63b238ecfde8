import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";

export const billingPaths = {
  billing: "/api/billing",
  receipt: (paymentId: string) => `/api/billing/receipts/${encodeURIComponent(paymentId)}`,
};
export const billingPages = { billing: "/billing", receipt: (paymentId: string) => `/billing/receipts/${encodeURIComponent(paymentId)}`, caseOf: (id: string) => `/cases/${encodeURIComponent(id)}` };
export const billingKeys = { billing: ["billing"] as const, receipt: (id: string) => ["billing", "receipt", id] as const };

export interface BillingPayment {
  id: string;
  caseId: string;
  caseLabel: string;
  status: string;
  tierLabel: string;
  amountCents: number;
  currency: string;
  cardBrand: string | null;
  cardLast4: string | null;
  authorizedAt: string | null;
  capturedAt: string | null;
  releasedAt: string | null;
  refundedAt: string | null;
  receiptNumber: string | null;
  message: string | null;
  createdAt: string;
}

export interface Billing {
  currency: string;
  totals: { chargedCents: number; refundedCents: number; heldCents: number };
  payments: BillingPayment[];
}

export const getBilling = () => api.get<Billing>(billingPaths.billing);
export const billingQuery = queryOptions({ queryKey: billingKeys.billing, queryFn: getBilling });
export const useBilling = () => useQuery(billingQuery);
