import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { expertKeys, expertPaths } from "./paths";
import type { ExpertAbilities, ExpertProfile } from "./types";

export const getMyProfile = () => api.get<{ profile: ExpertProfile; abilities: ExpertAbilities }>(expertPaths.me);

export const myProfileQuery = queryOptions({ queryKey: expertKeys.me, queryFn: getMyProfile });

export const useMyExpertProfile = () => useQuery(myProfileQuery);
