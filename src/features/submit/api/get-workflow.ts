import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { submitKeys, submitPaths } from "./paths";
import type { Workflow } from "./types";

export const getWorkflow = (id: string) => api.get<Workflow>(submitPaths.workflow(id));

export const workflowQuery = (id: string) =>
  queryOptions({ queryKey: submitKeys.workflow(id), queryFn: () => getWorkflow(id) });

/** The paid workflow of a case; `pollMs` keeps it fresh (e.g. while a payment is confirmed). */
export const useWorkflow = (id: string, pollMs?: number | false) =>
  useQuery({ ...workflowQuery(id), refetchInterval: pollMs ?? 30_000, refetchOnWindowFocus: true });
