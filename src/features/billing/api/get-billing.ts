import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";

export const billingPaths = {
  billing: "/api/billing",
  receipt: (paymentId: string) => `/api/billing/receipts/${encodeURIComponent(paymentId)}`,
};
export const billingPages = { billing: "/billing", receipt: (paymentId: string) => `/billing/receipts/${encodeURIComponent(paymentId)}`, caseOf: (id: string) => `/cases/${encodeURIComponent(id)}` };
export const billingKeys = { billing: ["billing"] as const, receipt: (id: string) => ["billing", "receipt", id] as const };

export type { BillingPaymentView as BillingPayment, BillingView as Billing } from "../../../../shared/views/money";
import type { BillingView as Billing } from "../../../../shared/views/money";

export const getBilling = () => api.get<Billing>(billingPaths.billing);
export const billingQuery = queryOptions({ queryKey: billingKeys.billing, queryFn: getBilling });
export const useBilling = () => useQuery(billingQuery);
