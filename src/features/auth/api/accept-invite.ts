import { queryOptions, useMutation, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { acceptInviteSchema, type AcceptInviteInput } from "../../../../shared/schemas/auth";
import { authKeys, authPaths } from "./paths";

export interface InvitePreview {
  email: string;
  name: string | null;
  shopName: string;
  expiresAt: string;
}

/** Who invited whom, before accepting (POST so the token stays out of request logs). */
export const previewInvite = (token: string) => api.post<InvitePreview>(authPaths.invitePreview, { token });

export const invitePreviewQuery = (token: string) =>
  queryOptions({ queryKey: authKeys.invite(token), queryFn: () => previewInvite(token), enabled: token.length > 0 });

export const useInvitePreview = (token: string) => useQuery(invitePreviewQuery(token));

export const acceptInvite = (input: AcceptInviteInput) =>
  api.post<{ ok: true; email: string; message: string }>(authPaths.inviteAccept, acceptInviteSchema.parse(input));

export const useAcceptInvite = () => useMutation({ mutationFn: acceptInvite });
