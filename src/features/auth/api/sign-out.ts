import { useMutation, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { authKeys, authPaths } from "./paths";

export const signOut = () => api.post<{ success: boolean }>(authPaths.signOut, {});

export function useSignOut() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: signOut,
    onSettled: () => {
      qc.setQueryData(authKeys.me, null);
      qc.removeQueries({ predicate: (q) => q.queryKey[0] !== authKeys.config[0] && q.queryKey[0] !== authKeys.me[0] });
    },
  });
}
