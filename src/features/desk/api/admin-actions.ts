import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { reassignSchema, refundSchema } from "../../../../shared/schemas/queue";
import type { RefundView } from "../../../../shared/views/money";
import type { CaseStateView } from "../../../../shared/views/workflow";
import type { CaseFiltersView } from "../../../../shared/views/desk";
import { deskKeys, deskPaths } from "./paths";

export const refundCase = (id: string, reason: string) =>
  api.post<RefundView>(deskPaths.refund(id), refundSchema.parse({ reason }));
export const reassignCase = (id: string, expertId: string, reason: string) =>
  api.post<CaseStateView>(deskPaths.reassign(id), reassignSchema.parse({ expertId, reason }));
export const releaseCase = (id: string) => api.post<CaseStateView>(deskPaths.release(id));

/** The admin's actions on a case; each refreshes the cases, the queue and billing. */
export function useAdminCaseActions(id: string) {
  const qc = useQueryClient();
  const settle = () =>
    Promise.all([["cases"], ["queue"], ["billing"]].map((queryKey) => qc.invalidateQueries({ queryKey })));
  return {
    refund: useMutation({ mutationFn: (reason: string) => refundCase(id, reason), onSettled: settle }),
    reassign: useMutation({
      mutationFn: (v: { expertId: string; reason: string }) => reassignCase(id, v.expertId, v.reason),
      onSettled: settle,
    }),
    release: useMutation({ mutationFn: () => releaseCase(id), onSettled: settle }),
  };
}

export interface ApprovedExpert {
  userId: string;
  name: string;
  available: boolean;
  maxOpenCases: number;
  systems: string[];
}

export const approvedExpertsQuery = queryOptions({
  queryKey: deskKeys.approvedExperts,
  queryFn: () => api.get<{ experts: ApprovedExpert[] }>(deskPaths.approvedExperts),
  staleTime: 60_000,
});
export const useApprovedExperts = (enabled: boolean) => useQuery({ ...approvedExpertsQuery, enabled });

export const caseFiltersQuery = queryOptions({
  queryKey: deskKeys.filters,
  queryFn: () => api.get<CaseFiltersView>(deskPaths.filters),
  staleTime: 60_000,
});
/** The shops and experts the admin's case list filters by. */
export const useCaseFilters = (enabled: boolean) => useQuery({ ...caseFiltersQuery, enabled });
