import { useMutation, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { teamKeys, teamPaths } from "./paths";

export const removeMember = (shopId: string, userId: string) => api.del<void>(teamPaths.member(shopId, userId));

export function useRemoveMember(shopId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (userId: string) => removeMember(shopId, userId),
    onSuccess: () => qc.invalidateQueries({ queryKey: teamKeys.team(shopId) }),
  });
}
