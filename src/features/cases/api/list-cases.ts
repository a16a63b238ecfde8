import { keepPreviousData, queryOptions, useQuery } from "@tanstack/react-query";
import type { CaseSortField } from "../../../../shared/schemas/case";
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
