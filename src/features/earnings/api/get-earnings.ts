import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";

export const earningsPaths = { earnings: "/api/earnings", adminPayouts: "/api/admin/payouts" };
export const earningsKeys = { earnings: ["earnings"] as const, adminPayouts: ["admin", "payouts"] as const };

export interface Earnings {
  currency: string;
  totals: { earnedCents: number; reversedCents: number; paidCents: number; pendingPayoutCents: number; unpaidCents: number };
  cases: { caseId: string; label: string; capturedAt: string; grossCents: number; deskCents: number; expertCents: number; reversedCents: number; status: string }[];
  payouts: { id: string; amountCents: number; currency: string; status: string; transferId: string | null; createdAt: string; paidAt: string | null; failureMessage: string | null }[];
}

export const getEarnings = () => api.get<Earnings>(earningsPaths.earnings);
export const earningsQuery = queryOptions({ queryKey: earningsKeys.earnings, queryFn: getEarnings });
export const useEarnings = () => useQuery(earningsQuery);
