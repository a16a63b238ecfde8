import { useMutation, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { inviteTechnicianSchema, type InviteTechnicianInput } from "../../../../shared/schemas/auth";
import { teamKeys, teamPaths } from "./paths";
import type { PendingInvite } from "./get-team";

export const inviteTechnician = (shopId: string, input: InviteTechnicianInput) =>
  api.post<{ invite: PendingInvite }>(teamPaths.invites(shopId), inviteTechnicianSchema.parse(input));

export function useInviteTechnician(shopId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: InviteTechnicianInput) => inviteTechnician(shopId, input),
    onSuccess: () => qc.invalidateQueries({ queryKey: teamKeys.team(shopId) }),
  });
}
