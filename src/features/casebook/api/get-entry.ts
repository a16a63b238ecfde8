import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import type { CasebookEntryView } from "../../../../shared/schemas/casebook";
import { casebookKeys, casebookPaths } from "./paths";

export const getEntry = (id: string) => api.get<CasebookEntryView>(casebookPaths.entry(id));

export const entryQuery = (id: string) =>
  queryOptions({ queryKey: casebookKeys.entry(id), queryFn: () => getEntry(id) });

export const useEntry = (id: string | undefined) => useQuery({ ...entryQuery(id ?? ""), enabled: !!id });
