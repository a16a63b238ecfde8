import { useMutation, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { teamKeys, teamPaths } from "./paths";

export const revokeInvite = (shopId: string, inviteId: string) => api.del<void>(teamPaths.invite(shopId, inviteId));

export function useRevokeInvite(shopId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (inviteId: string) => revokeInvite(shopId, inviteId),
    onSuccess: () => qc.invalidateQueries({ queryKey: teamKeys.team(shopId) }),
  });
}
