import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { pricingUpdateSchema, type PricingUpdateInput } from "../../../../shared/schemas/queue";

export const pricingPaths = { admin: "/api/admin/pricing" };
export const pricingKeys = { admin: ["pricing", "admin"] as const, all: ["pricing"] as const };

export interface AdminPricing {
  currency: string;
  deskShareBasisPoints: number;
  firstWaveSize: number;
  widenAfterMinutes: number;
  closeAnsweredAfterDays: number;
  tiers: {
    id: string;
    label: string;
    description: string | null;
    priceCents: number;
    deadlineMinutes: number;
    active: boolean;
    sortOrder: number;
  }[];
  updatedAt: string | null;
}

export const getAdminPricing = () => api.get<AdminPricing>(pricingPaths.admin);
export const adminPricingQuery = queryOptions({ queryKey: pricingKeys.admin, queryFn: getAdminPricing });
export const useAdminPricing = () => useQuery(adminPricingQuery);

export const updatePricing = (input: PricingUpdateInput) =>
  api.put<AdminPricing>(pricingPaths.admin, pricingUpdateSchema.parse(input));

export function useUpdatePricing() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: updatePricing,
    onSettled: () => qc.invalidateQueries({ queryKey: pricingKeys.all }),
  });
}
