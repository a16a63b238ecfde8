import { useMemo } from "react";
import { useTraceWindowResults } from "../api/get-trace-window";
import { windowParams } from "../lib/window-params";
import type { TraceInfo, TraceWindowData } from "../types";

export interface TraceWindowState {
  data: TraceWindowData | null;
  loading: boolean;
  error: Error | null;
}

/**
 * Min/max data for each trace over a view given in display time (trace time − offset), at one
 * bucket per pixel of the plot. Nothing is asked until the plot's width is known (null), so a
 * chart asks once, at its real width. While a new window loads, the last one of that trace stays.
 */
export function useWindowData(
  traces: TraceInfo[],
  offsets: Record<string, number>,
  view: { t0: number; t1: number } | null,
  plotWidthPx: number | null,
): Record<string, TraceWindowState> {
  const params = traces.map((tr) =>
    view && plotWidthPx && plotWidthPx > 0 ? windowParams(tr, offsets[tr.id] ?? 0, view, plotWidthPx) : null,
  );
  const results = useTraceWindowResults(params);
  return useMemo(() => {
    const out: Record<string, TraceWindowState> = {};
    traces.forEach((tr, i) => {
      const r = results[i];
      out[tr.id] = { data: r?.data ?? null, loading: !!r?.loading, error: r?.error ?? null };
    });
    return out;
  }, [traces, results]);
}
