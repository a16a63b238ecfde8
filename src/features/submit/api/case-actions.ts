import { useMutation, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { confirmSchema, dataSentSchema, type ConfirmInput } from "../../../../shared/schemas/queue";
import { submitPaths } from "./paths";
import type { CaseStateView, ConfirmedView, DeletedDraftView, WithdrawnView } from "../../../../shared/views/workflow";

export const withdrawCase = (id: string) => api.post<WithdrawnView>(submitPaths.withdraw(id));
export const deleteDraft = (id: string) => api.del<DeletedDraftView>(submitPaths.one(id));
export const confirmCase = (id: string, input: ConfirmInput) =>
  api.post<ConfirmedView>(submitPaths.confirm(id), confirmSchema.parse(input));
export const markDataSent = (id: string, note?: string) =>
  api.post<CaseStateView>(submitPaths.dataSent(id), dataSentSchema.parse({ note }));

/** Mutations of the shop's side of a case; each refreshes everything under ["cases"]. */
export function useShopCaseActions(id: string) {
  const qc = useQueryClient();
  const settle = () => qc.invalidateQueries({ queryKey: ["cases"] });
  return {
    withdraw: useMutation({ mutationFn: () => withdrawCase(id), onSettled: settle }),
    // the draft is gone: its own queries are dropped, not refetched (they would answer 404)
    deleteDraft: useMutation({
      mutationFn: () => deleteDraft(id),
      onSuccess: () => {
        qc.removeQueries({ queryKey: ["cases", "detail", id] });
        qc.removeQueries({ queryKey: ["cases", "workflow", id] });
        return qc.invalidateQueries({ queryKey: ["cases", "list"] });
      },
    }),
    confirm: useMutation({ mutationFn: (input: ConfirmInput) => confirmCase(id, input), onSettled: settle }),
    dataSent: useMutation({ mutationFn: (note?: string) => markDataSent(id, note), onSettled: settle }),
  };
}
