import { useRef } from "react";
import { useTraceWindows } from "../api/get-trace-window";
import { traceBounds } from "../lib/capture-view";
import { fetchWindowFor, quantizeWindow } from "../lib/buckets";
import type { TraceInfo, TraceWindowData } from "../types";

export interface TraceWindowState {
  data: TraceWindowData | null;
  loading: boolean;
  error: Error | null;
}

/**
 * Min/max data for each trace over a view given in display time (trace time − offset), at about two
 * buckets per pixel. While a new window loads, the last data of that trace is kept on screen.
 */
export function useWindowData(
  traces: TraceInfo[],
  offsets: Record<string, number>,
  view: { t0: number; t1: number } | null,
  plotWidthPx: number,
): Record<string, TraceWindowState> {
  const params = traces.map((tr) => {
    if (!view || plotWidthPx <= 0) return null;
    const off = offsets[tr.id] ?? 0;
    const b = traceBounds(tr);
    const fw = fetchWindowFor({ t0: view.t0 + off, t1: view.t1 + off }, b, plotWidthPx, tr.sampleRateHz);
    if (!fw) return null;
    const q = quantizeWindow(fw, b);
    return { traceId: tr.id, t0: q.t0, t1: q.t1, width: q.width };
  });
  const results = useTraceWindows(params);
  const last = useRef<Record<string, TraceWindowData>>({});
  const out: Record<string, TraceWindowState> = {};
  traces.forEach((tr, i) => {
    const r = results[i];
    if (r?.data) last.current[tr.id] = r.data;
    out[tr.id] = {
      data: r?.data ?? last.current[tr.id] ?? null,
      loading: !!r?.isFetching,
      error: (r?.error as Error | null) ?? null,
    };
  });
  return out;
}
