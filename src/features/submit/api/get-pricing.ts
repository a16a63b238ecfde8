import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { submitKeys, submitPaths } from "./paths";
import type { PublicPricing } from "./types";

export const getPricing = () => api.get<PublicPricing>(submitPaths.pricing);

export const pricingQuery = queryOptions({ queryKey: submitKeys.pricing, queryFn: getPricing, staleTime: 60_000 });

export const usePricing = (enabled = true) => useQuery({ ...pricingQuery, enabled });
