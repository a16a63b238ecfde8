import { useMutation, useQueryClient } from "@tanstack/react-query";
import type { CaseDraft } from "../../../../shared/schemas/case";
import { api } from "../../../lib/api-client";
import { caseKeys, casePaths } from "./paths";
import type { CaseCreated } from "./types";

/** POST /api/cases: a new draft from whatever has been filled in so far. */
export const createCase = (body: CaseDraft) => api.post<CaseCreated>(casePaths.list, body);

export function useCreateCase() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: createCase,
    onSuccess: () => qc.invalidateQueries({ queryKey: caseKeys.lists() }),
  });
}
