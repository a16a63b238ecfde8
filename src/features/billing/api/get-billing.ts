import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";

export const billingPaths = {
  billing: (shopId?: string) => `/api/billing${shopId ? `?shopId=${encodeURIComponent(shopId)}` : ""}`,
  receipt: (paymentId: string) => `/api/billing/receipts/${encodeURIComponent(paymentId)}`,
};
export const billingPages = {
  billing: "/billing",
  receipt: (paymentId: string) => `/billing/receipts/${encodeURIComponent(paymentId)}`,
  caseOf: (id: string) => `/cases/${encodeURIComponent(id)}`,
};
export const billingKeys = {
  billing: ["billing"] as const,
  of: (shopId?: string) => ["billing", "shop", shopId ?? "mine"] as const,
  receipt: (id: string) => ["billing", "receipt", id] as const,
};

export type { BillingPaymentView as BillingPayment, BillingView as Billing } from "../../../../shared/views/money";
import type { BillingView as Billing } from "../../../../shared/views/money";

/** The owner's own shop's billing; admins name the shop. */
export const getBilling = (shopId?: string) => api.get<Billing>(billingPaths.billing(shopId));
export const billingQuery = (shopId?: string) =>
  queryOptions({ queryKey: billingKeys.of(shopId), queryFn: () => getBilling(shopId) });
export const useBilling = (shopId?: string, enabled = true) => useQuery({ ...billingQuery(shopId), enabled });
