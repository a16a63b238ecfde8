import { keepPreviousData, queryOptions, useQuery } from "@tanstack/react-query";
import type { CaseDeadlineFilter, CaseSortField, CaseState } from "../../../../shared/schemas/case";
import type { CaseStatus } from "../../../../shared/domain/case-status";
import { api } from "../../../lib/api-client";
import { caseKeys, casePaths } from "./paths";
import type { CaseList } from "./types";

export interface CaseListParams {
  status?: CaseStatus;
  q?: string;
  vehicle?: string;
  page: number;
  pageSize: number;
  sort?: CaseSortField;
  dir?: "asc" | "desc";
  /** open or finished cases */
  state?: CaseState;
  /** running answer deadlines: overdue, at risk, or due within a day */
  deadline?: CaseDeadlineFilter;
  expertId?: string;
  shopId?: string;
}

export function listCases(params: CaseListParams): Promise<CaseList> {
  const qs = new URLSearchParams();
  for (const [k, v] of Object.entries(params)) if (v !== undefined && v !== "") qs.set(k, String(v));
  return api.get<CaseList>(`${casePaths.list}?${qs}`);
}

export const caseListQuery = (params: CaseListParams) =>
  queryOptions({
    queryKey: caseKeys.list(params),
    queryFn: () => listCases(params),
    placeholderData: keepPreviousData,
  });

export const useCaseList = (params: CaseListParams) => useQuery(caseListQuery(params));

/** A list that stays fresh on its own (the home page): unread counts also refresh on pushed notices. */
export const useLiveCaseList = (params: CaseListParams) =>
  useQuery({ ...caseListQuery(params), refetchInterval: 60_000, refetchOnWindowFocus: true });
