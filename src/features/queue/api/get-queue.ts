import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { queueKeys, queuePaths } from "./paths";
import type { QueueView } from "./types";

export const getQueue = () => api.get<QueueView>(queuePaths.queue);

export const queueQuery = queryOptions({ queryKey: queueKeys.queue, queryFn: getQueue });

/** The queue refreshes every 20 s (cases are claimed by others meanwhile). */
export const useQueue = () => useQuery({ ...queueQuery, refetchInterval: 20_000, refetchOnWindowFocus: true });
