import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import type { Me } from "../../../../shared/schemas/auth";
import { authKeys, authPaths } from "./paths";

export type { Me };

/**
 * The signed-in user, or null. Asks the session probe (`GET /api/session`, 200 signed in or not),
 * so a signed-out page makes no failing request and logs no console error; `GET /api/me` stays a
 * protected route (401 when signed out).
 */
export async function getMe(): Promise<Me | null> {
  const { user } = await api.get<{ user: Me | null }>(authPaths.session);
  return user;
}

/** The signed-in user, or null when signed out. */
export const meQuery = queryOptions({
  queryKey: authKeys.me,
  queryFn: getMe,
  staleTime: 60_000,
});

export const useMe = () => useQuery(meQuery);
