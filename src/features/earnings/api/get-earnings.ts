import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";

export const earningsPaths = { earnings: "/api/earnings", adminPayouts: "/api/admin/payouts" };
export const earningsKeys = { earnings: ["earnings"] as const, adminPayouts: ["admin", "payouts"] as const };

import type { EarningsView as Earnings } from "../../../../shared/views/money";
export type { Earnings };

export const getEarnings = () => api.get<Earnings>(earningsPaths.earnings);
export const earningsQuery = queryOptions({ queryKey: earningsKeys.earnings, queryFn: getEarnings });
export const useEarnings = () => useQuery(earningsQuery);
