import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import {
  casebookEditSchema,
  type CasebookEditInput,
  type CasebookEntryView,
} from "../../../../shared/schemas/casebook";
import { casebookKeys, casebookPaths } from "./paths";

export const moderateEntry = (id: string, input: CasebookEditInput) =>
  api.patch<CasebookEntryView>(casebookPaths.moderate(id), casebookEditSchema.parse(input));

/** Admin: hide, unhide or edit an entry; the whole casebook is refetched (search results change). */
export function useModerateEntry(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: CasebookEditInput) => moderateEntry(id, input),
    onSuccess: (entry) => qc.setQueryData(casebookKeys.entry(id), entry),
    onSettled: () => qc.invalidateQueries({ queryKey: casebookKeys.all }),
  });
}

export interface HiddenEntry {
  id: string;
  title: string;
  hiddenReason: string | null;
  hiddenAt: string | null;
}

export const getHiddenEntries = () => api.get<{ items: HiddenEntry[] }>(casebookPaths.hidden);
export const hiddenEntriesQuery = () => queryOptions({ queryKey: casebookKeys.hidden, queryFn: getHiddenEntries });
export const useHiddenEntries = (enabled: boolean) => useQuery({ ...hiddenEntriesQuery(), enabled });
