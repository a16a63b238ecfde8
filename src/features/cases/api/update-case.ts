import { useMutation, useQueryClient } from "@tanstack/react-query";
import type { CasePatch } from "../../../../shared/schemas/case";
import { api } from "../../../lib/api-client";
import { caseKeys, casePaths } from "./paths";
import type { CaseDetail } from "./types";

/** PATCH /api/cases/:id (drafts only). */
export const updateCase = ({ id, patch }: { id: string; patch: CasePatch }) =>
  api.patch<CaseDetail>(casePaths.one(id), patch);

export function useUpdateCase() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: updateCase,
    onSuccess: (_data, { id }) =>
      Promise.all([
        qc.invalidateQueries({ queryKey: caseKeys.detail(id) }),
        qc.invalidateQueries({ queryKey: caseKeys.lists() }),
      ]),
  });
}
