import { useMutation, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { casebookVoteSchema, type CasebookEntryView } from "../../../../shared/schemas/casebook";
import { casebookKeys, casebookPaths } from "./paths";

export const voteEntry = (id: string, helpful: boolean) =>
  api.post<{ helpfulCount: number; voted: boolean }>(casebookPaths.vote(id), casebookVoteSchema.parse({ helpful }));

/** "This helped" (or take it back); the entry shows the new count at once. */
export function useVoteEntry(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (helpful: boolean) => voteEntry(id, helpful),
    onSuccess: (r) =>
      qc.setQueryData<CasebookEntryView>(casebookKeys.entry(id), (old) =>
        old ? { ...old, helpfulCount: r.helpfulCount, voted: r.voted } : old,
      ),
    onSettled: () => qc.invalidateQueries({ queryKey: ["casebook", "search"] }),
  });
}
