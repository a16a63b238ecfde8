import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { submitKeys, submitPaths } from "./paths";
import type { HistoryEntry } from "./types";

export const getHistory = (id: string) =>
  api.get<{ caseId: string; status: string; items: HistoryEntry[] }>(submitPaths.history(id));

export const historyQuery = (id: string) =>
  queryOptions({ queryKey: submitKeys.history(id), queryFn: () => getHistory(id) });

export const useHistory = (id: string, enabled = true) => useQuery({ ...historyQuery(id), enabled });
