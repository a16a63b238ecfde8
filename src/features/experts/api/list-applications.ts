import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import type { ExpertStatus } from "../../../../shared/schemas/auth";
import { expertKeys, expertPaths } from "./paths";
import type { ExpertAbilities, ExpertProfile } from "./types";

export interface ExpertApplication extends ExpertProfile {
  name: string;
  email: string;
  emailVerified: boolean;
  abilities: ExpertAbilities;
}

export const listApplications = (status: ExpertStatus) =>
  api.get<{ experts: ExpertApplication[] }>(expertPaths.list(status));

export const applicationsQuery = (status: ExpertStatus) =>
  queryOptions({ queryKey: expertKeys.list(status), queryFn: () => listApplications(status) });

export const useExpertApplications = (status: ExpertStatus) => useQuery(applicationsQuery(status));
