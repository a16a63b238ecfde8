import { queryOptions, useQuery } from "@tanstack/react-query";
import { api, ApiError } from "../../../lib/api-client";
import type { Me } from "../../../../shared/schemas/auth";
import { authKeys, authPaths } from "./paths";

export type { Me };

export async function getMe(): Promise<Me | null> {
  try {
    return await api.get<Me>(authPaths.me);
  } catch (e) {
    if (e instanceof ApiError && e.status === 401) return null;
    throw e;
  }
}

/** The signed-in user, or null when signed out. */
export const meQuery = queryOptions({
  queryKey: authKeys.me,
  queryFn: getMe,
  staleTime: 60_000,
});

export const useMe = () => useQuery(meQuery);
