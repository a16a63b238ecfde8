import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import type { PublicConfig } from "../../../../shared/schemas/auth";
import { authKeys, authPaths } from "./paths";

export const getConfig = () => api.get<PublicConfig>(authPaths.config);

/** Demo mode, the demo sign-ins and whether the development inbox exists. */
export const configQuery = queryOptions({ queryKey: authKeys.config, queryFn: getConfig, staleTime: Infinity });

export const useConfig = () => useQuery(configQuery);
