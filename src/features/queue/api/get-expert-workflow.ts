import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { queueKeys, queuePaths } from "./paths";
import type { ExpertWorkflow } from "./types";

export const getExpertWorkflow = (id: string) => api.get<ExpertWorkflow>(queuePaths.workflow(id));

export const expertWorkflowQuery = (id: string) =>
  queryOptions({ queryKey: queueKeys.workflow(id), queryFn: () => getExpertWorkflow(id) });

export const useExpertWorkflow = (id: string) => useQuery({ ...expertWorkflowQuery(id), refetchInterval: 30_000 });
