import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";

/** Min/max buckets of a trace over [t0, t1) (GET /api/traces/:id/window). */
export interface ReportWindow {
  t: number[];
  series: { name: string; min: number[]; max: number[] }[];
}

export const windowUrl = (traceId: string, t0: number, t1: number, width: number) =>
  `/api/traces/${encodeURIComponent(traceId)}/window?t0=${encodeURIComponent(String(t0))}&t1=${encodeURIComponent(String(t1))}&width=${Math.round(width)}`;

export const reportWindowQuery = (traceId: string, t0: number, t1: number, width: number) =>
  queryOptions({
    queryKey: ["traces", traceId, "window", t0, t1, width],
    queryFn: () => api.get<ReportWindow>(windowUrl(traceId, t0, t1, width)),
    staleTime: Infinity,
  });

export const useReportWindow = (traceId: string, t0: number, t1: number, width: number) =>
  useQuery(reportWindowQuery(traceId, t0, t1, width));
