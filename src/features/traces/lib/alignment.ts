/** Aligning several traces on their first firing event or first trigger-level crossing. Pure. */
import type { TraceInfo, TraceWindowData } from "../types";

export type Slope = "rising" | "falling";

/**
 * First crossing of `level` in min/max bucket data. A rising crossing needs the signal to have been
 * below the level (some bucket's min < level) and then at or above it (a bucket's max ≥ level);
 * a bucket that holds both counts as the crossing. Returns the bucket's time, or null.
 */
export function firstCrossing(
  t: ArrayLike<number>,
  min: ArrayLike<number>,
  max: ArrayLike<number>,
  level: number,
  slope: Slope = "rising",
): number | null {
  let armed = false;
  const n = Math.min(t.length, min.length, max.length);
  for (let k = 0; k < n; k++) {
    const lo = min[k];
    const hi = max[k];
    if (lo == null || hi == null || !Number.isFinite(lo) || !Number.isFinite(hi)) continue;
    if (slope === "rising") {
      if (hi >= level && (armed || lo < level)) return t[k];
      if (lo < level) armed = true;
    } else {
      if (lo <= level && (armed || hi > level)) return t[k];
      if (hi > level) armed = true;
    }
  }
  return null;
}

/** Half-way between the data's lowest and highest value: the fallback trigger level. */
export function midLevel(series: { min: ArrayLike<number>; max: ArrayLike<number> }): number | null {
  let lo = Infinity;
  let hi = -Infinity;
  for (let k = 0; k < series.min.length; k++) if (Number.isFinite(series.min[k])) lo = Math.min(lo, series.min[k]);
  for (let k = 0; k < series.max.length; k++) if (Number.isFinite(series.max[k])) hi = Math.max(hi, series.max[k]);
  return Number.isFinite(lo) && Number.isFinite(hi) && hi > lo ? (lo + hi) / 2 : null;
}

/**
 * The level the overlay aligns on, in the file's unit (the window data's): the recorded trigger
 * level (typed in the scope's unit; `fileFromScope` converts, shared/trace/units), else the mid
 * level of the data.
 */
export function alignmentLevel(trace: TraceInfo, data?: TraceWindowData | null, fileFromScope = 1): number | null {
  const s = data?.series?.[0];
  const trig = trace.settings?.triggerLevel;
  return typeof trig === "number" ? trig * fileFromScope : s ? midLevel(s) : null;
}

/**
 * The time in a trace's own base that the overlay puts at 0: its first analysis event, else the
 * first crossing of `level` (default: alignmentLevel) with the recorded slope in the given window
 * data of its first channel, else the trace's start.
 */
export function alignmentTime(
  trace: TraceInfo,
  data?: TraceWindowData | null,
  level: number | null = alignmentLevel(trace, data),
): { time: number; source: "event" | "crossing" | "start" } {
  const ev = trace.analysis?.events?.[0]?.timeS;
  if (typeof ev === "number" && Number.isFinite(ev)) return { time: ev, source: "event" };
  const s = data?.series?.[0];
  if (data && s && level != null) {
    const c = firstCrossing(data.t, s.min, s.max, level, trace.settings?.triggerSlope ?? "rising");
    if (c != null) return { time: c, source: "crossing" };
  }
  return { time: trace.t0 ?? 0, source: "start" };
}

/**
 * A crossing found in coarse buckets is only as precise as one bucket; the window to fetch again,
 * finely, spans two coarse buckets either side of it (the bucket before the crossing lies wholly on
 * the far side of the level, so the fine data starts armed).
 */
export function refineWindow(
  crossing: number,
  coarse: { t0: number; t1: number; width: number },
  bounds: { start: number; end: number },
): { t0: number; t1: number } {
  const bw = (coarse.t1 - coarse.t0) / Math.max(1, coarse.width);
  return { t0: Math.max(bounds.start, crossing - 2 * bw), t1: Math.min(bounds.end, crossing + 2 * bw) };
}

/** Display time (aligned, 0 at the alignment point) ↔ the trace's own time. */
export const toDisplayTime = (t: number, offset: number) => t - offset;
export const toTraceTime = (x: number, offset: number) => x + offset;
