/** What one chart asks the window endpoint for. Pure. */
import type { TraceInfo } from "../types";
import { traceBounds } from "./capture-view";
import { fetchWindowFor, quantizeWindow, VIEW_BUCKETS_PER_PIXEL } from "./buckets";

export interface WindowParams {
  traceId: string;
  t0: number;
  t1: number;
  width: number;
}

/** The window to ask for: the view (display time) shifted into the trace's time, padded, quantised. */
export function windowParams(
  tr: TraceInfo,
  offset: number,
  view: { t0: number; t1: number },
  plotWidthPx: number,
): WindowParams | null {
  const b = traceBounds(tr);
  const fw = fetchWindowFor(
    { t0: view.t0 + offset, t1: view.t1 + offset },
    b,
    plotWidthPx,
    tr.sampleRateHz,
    0.25,
    VIEW_BUCKETS_PER_PIXEL,
  );
  if (!fw) return null;
  const q = quantizeWindow(fw, b);
  return { traceId: tr.id, t0: q.t0, t1: q.t1, width: q.width };
}
