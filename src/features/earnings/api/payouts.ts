import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { payoutRunSchema } from "../../../../shared/schemas/queue";
import { earningsKeys, earningsPaths } from "./get-earnings";

export interface PayoutOverview {
  experts: { expertId: string; name: string; unpaidCents: number; paidCents: number }[];
}

export const getPayoutOverview = () => api.get<PayoutOverview>(earningsPaths.adminPayouts);
export const payoutOverviewQuery = queryOptions({ queryKey: earningsKeys.adminPayouts, queryFn: getPayoutOverview });
export const usePayoutOverview = () => useQuery(payoutOverviewQuery);

export const runPayouts = (expertId?: string) =>
  api.post<{
    payouts: {
      id: string;
      expertId: string;
      amountCents: number;
      status: string;
      transferId: string | null;
      failureMessage: string | null;
    }[];
  }>(earningsPaths.adminPayouts, payoutRunSchema.parse({ expertId }));

export function useRunPayouts() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (expertId?: string) => runPayouts(expertId),
    onSettled: () => qc.invalidateQueries({ queryKey: earningsKeys.adminPayouts }),
  });
}
