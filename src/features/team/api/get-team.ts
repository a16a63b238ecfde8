import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import type { Role } from "../../../../shared/domain/case-status";
import { teamKeys, teamPaths } from "./paths";

export interface TeamMember {
  id: string;
  name: string;
  email: string;
  role: Role;
  joinedAt: string;
  abilities: { view: boolean; remove: boolean };
}

export interface PendingInvite {
  id: string;
  email: string;
  name: string | null;
  expiresAt: string;
  createdAt: string;
}

export interface Team {
  shop: { id: string; name: string };
  members: TeamMember[];
  invites: PendingInvite[];
  abilities: { view: boolean; listMembers: boolean; invite: boolean; removeMember: boolean; manageBilling: boolean };
}

export const getTeam = (shopId: string) => api.get<Team>(teamPaths.team(shopId));

export const teamQuery = (shopId: string) =>
  queryOptions({ queryKey: teamKeys.team(shopId), queryFn: () => getTeam(shopId) });

export const useTeam = (shopId: string) => useQuery(teamQuery(shopId));
