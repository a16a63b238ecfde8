import { useMemo } from "react";
import { useTraceWindowResults, type TraceWindowParams } from "../api/get-trace-window";
import type { TraceInfo, TraceWindowData } from "../types";
import { traceBounds } from "../lib/capture-view";
import { bucketsFor } from "../lib/buckets";
import { alignmentLevel, alignmentTime, refineWindow } from "../lib/alignment";
import type { ChannelUnits } from "../../../lib/trace-units";

export type AlignSource = "event" | "crossing" | "start";
export type Alignment = Record<string, { time: number; source: AlignSource }>;

const COARSE_PX = 2000;
const FINE_PX = 500;

/** The coarse window over the whole trace in which a trace without events looks for its crossing. */
function coarseParams(t: TraceInfo, overlay: boolean): TraceWindowParams | null {
  if (!overlay || t.analysis?.events?.length) return null;
  const b = traceBounds(t);
  if (!(b.end > b.start)) return null;
  return { traceId: t.id, t0: b.start, t1: b.end, width: bucketsFor(COARSE_PX, t.samples) };
}

interface Coarse {
  level: number | null;
  found: { time: number; source: AlignSource } | null;
}

function coarseFind(t: TraceInfo, data: TraceWindowData | undefined, units: ChannelUnits[] | undefined): Coarse {
  const level = data ? alignmentLevel(t, data, 1 / (units?.[0]?.scopeFromFile ?? 1)) : null;
  return { level, found: data ? alignmentTime(t, data, level) : null };
}

/**
 * Overlay alignment: each trace is put at 0 on its first analysis event, else on the first crossing
 * of its trigger level found in coarse buckets over the whole trace and then refined in a fine
 * window around it, else at its start. In single mode every trace keeps its own time (offset 0).
 */
export function useAlignment(
  traces: TraceInfo[],
  overlay: boolean,
  unitsById: Map<string, ChannelUnits[]>,
): { alignment: Alignment; offsets: Record<string, number> } {
  const coarseP = traces.map((t) => coarseParams(t, overlay));
  const coarse = useTraceWindowResults(coarseP);
  const found = useMemo(
    () => traces.map((t, i) => coarseFind(t, coarse[i]?.data, unitsById.get(t.id))),
    [traces, coarse, unitsById],
  );
  const fineP = traces.map((t, i) => {
    const p = coarseP[i];
    const c = found[i];
    if (!p || c?.found?.source !== "crossing") return null;
    const w = refineWindow(c.found.time, p, traceBounds(t));
    return { traceId: t.id, t0: w.t0, t1: w.t1, width: bucketsFor(FINE_PX, (w.t1 - w.t0) * t.sampleRateHz + 1) };
  });
  const fine = useTraceWindowResults(fineP);
  const alignment = useMemo(() => {
    const out: Alignment = {};
    traces.forEach((t, i) => {
      if (!overlay) return void (out[t.id] = { time: 0, source: "start" });
      const c = found[i]?.found ?? alignmentTime(t);
      const fineData = fine[i]?.data;
      const f = fineData ? alignmentTime(t, fineData, found[i]?.level ?? null) : null;
      out[t.id] = f?.source === "crossing" ? f : c;
    });
    return out;
  }, [traces, overlay, found, fine]);
  const offsets = useMemo(
    () => Object.fromEntries(Object.entries(alignment).map(([k, v]) => [k, v.time])),
    [alignment],
  );
  return { alignment, offsets };
}
