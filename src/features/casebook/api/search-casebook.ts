import { keepPreviousData, queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import type { CasebookSearchResult } from "../../../../shared/schemas/casebook";
import { casebookKeys, casebookPaths } from "./paths";

/** The search's parameters as they sit in the page's address (all strings, blanks left out). */
export interface CasebookSearchParams {
  q?: string;
  make?: string;
  model?: string;
  yearFrom?: string;
  yearTo?: string;
  engine?: string;
  system?: string;
  code?: string;
  confirmed?: string;
  sort?: string;
  page?: string;
}

export const SEARCH_PARAM_NAMES = [
  "q",
  "make",
  "model",
  "yearFrom",
  "yearTo",
  "engine",
  "system",
  "code",
  "confirmed",
  "sort",
  "page",
] as const;

export function searchUrl(p: CasebookSearchParams): string {
  const qs = new URLSearchParams();
  for (const k of SEARCH_PARAM_NAMES) {
    const v = p[k];
    if (v !== undefined && v !== "") qs.set(k, v);
  }
  const s = qs.toString();
  return s ? `${casebookPaths.search}?${s}` : casebookPaths.search;
}

export const searchCasebook = (p: CasebookSearchParams) => api.get<CasebookSearchResult>(searchUrl(p));

export const casebookSearchQuery = (p: CasebookSearchParams) =>
  queryOptions({
    queryKey: casebookKeys.search(p),
    queryFn: () => searchCasebook(p),
    placeholderData: keepPreviousData,
    staleTime: 30_000,
  });

export const useCasebookSearch = (p: CasebookSearchParams) => useQuery(casebookSearchQuery(p));
