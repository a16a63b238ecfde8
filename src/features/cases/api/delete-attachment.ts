import { useMutation, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { caseKeys } from "./paths";

/** DELETE /api/traces/:id and /api/photos/:id (drafts only, as the case's abilities say). */
export const attachmentPaths = {
  trace: (id: string) => `/api/traces/${encodeURIComponent(id)}`,
  photo: (id: string) => `/api/photos/${encodeURIComponent(id)}`,
};

export const deleteAttachment = ({ kind, id }: { kind: "trace" | "photo"; id: string; caseId: string }) =>
  api.del<void>(attachmentPaths[kind](id));

export function useDeleteAttachment() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: deleteAttachment,
    onSuccess: (_d, { caseId }) => qc.invalidateQueries({ queryKey: caseKeys.detail(caseId) }),
  });
}
