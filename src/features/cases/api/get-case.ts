import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { caseKeys, casePaths } from "./paths";
import type { CaseDetail } from "./types";

export const getCase = (id: string) => api.get<CaseDetail>(casePaths.one(id));

export const caseQuery = (id: string) =>
  queryOptions({
    queryKey: caseKeys.detail(id),
    queryFn: () => getCase(id),
  });

export const useCase = (id: string | undefined) => useQuery({ ...caseQuery(id ?? ""), enabled: !!id });
