import { queryOptions, useQuery } from "@tanstack/react-query";
import { api, ApiError } from "../../../lib/api-client";

export interface Me {
  id: string;
  email: string;
  name: string;
  role: "technician" | "owner" | "expert" | "admin";
  shopId: string | null;
}

/** The signed-in user, or null when signed out. */
export const meQuery = queryOptions({
  queryKey: ["me"],
  queryFn: async (): Promise<Me | null> => {
    try {
      return await api.get<Me>("/api/me");
    } catch (e) {
      if (e instanceof ApiError && e.status === 401) return null;
      throw e;
    }
  },
  staleTime: 60_000,
});

export const useMe = () => useQuery(meQuery);
