import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { billingKeys, billingPaths } from "./get-billing";

export interface Receipt {
  receiptNumber: string;
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

export const getReceipt = (id: string) => api.get<Receipt>(billingPaths.receipt(id));
export const receiptQuery = (id: string) => queryOptions({ queryKey: billingKeys.receipt(id), queryFn: () => getReceipt(id) });
export const useReceipt = (id: string) => useQuery(receiptQuery(id));
