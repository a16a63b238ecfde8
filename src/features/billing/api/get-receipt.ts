import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { billingKeys, billingPaths } from "./get-billing";
import type { ReceiptView as Receipt } from "../../../../shared/views/queue";
export type { Receipt };

export const getReceipt = (id: string) => api.get<Receipt>(billingPaths.receipt(id));
export const receiptQuery = (id: string) =>
  queryOptions({ queryKey: billingKeys.receipt(id), queryFn: () => getReceipt(id) });
export const useReceipt = (id: string) => useQuery(receiptQuery(id));
