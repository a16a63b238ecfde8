import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import type { SimilarCasesResult } from "../../../../shared/schemas/casebook";
import { casebookKeys, casebookPaths } from "./paths";

export const getSimilar = (caseId: string, limit = 5) =>
  api.get<SimilarCasesResult>(casebookPaths.similar(caseId, limit));

/** Under ["casebook"]; `version` (e.g. the case's trace count) is in the key, so new traces refetch it. */
export const similarQuery = (caseId: string, limit = 5, version: string | number = 0) =>
  queryOptions({
    queryKey: [...casebookKeys.similar(caseId), limit, version],
    queryFn: () => getSimilar(caseId, limit),
    staleTime: 60_000,
  });

export const useSimilar = (caseId: string, limit = 5, version: string | number = 0) =>
  useQuery(similarQuery(caseId, limit, version));
