/** The capture view: the screen the technician saw, from the trace's capture settings. */
import {
  SCREEN_DIVISIONS_X,
  SCREEN_DIVISIONS_Y,
  screenVoltageRange,
} from "../../../../shared/schemas/capture-settings";
import type { TraceInfo } from "../types";
import { traceUnits, type ChannelUnits } from "../../../lib/trace-units";

/** Where the trigger sits on the screen when the trigger point is known (10–20 % pre-trigger). */
export const PRE_TRIGGER_FRACTION = 0.15;

export interface CaptureView {
  /** visible time window, seconds in the trace's time base */
  t0: number;
  t1: number;
  /** visible level range, in the channel's physical unit (the unit every view shows) */
  vMin: number;
  vMax: number;
  timePerDivS: number;
  /** the screen's level per division in the physical unit (volts/division × the probe's scale) */
  voltsPerDiv: number;
  /** the trigger point in time, when known (first analysis event) */
  triggerTimeS: number | null;
  /** the recorded trigger level in the physical unit, when set */
  triggerLevel: number | null;
}

export interface TraceBounds {
  start: number;
  end: number;
}

export function traceBounds(trace: Pick<TraceInfo, "t0" | "durationS">): TraceBounds {
  const start = trace.t0 ?? 0;
  return { start, end: start + Math.max(0, trace.durationS) };
}

const positive = (x: unknown): x is number => typeof x === "number" && Number.isFinite(x) && x > 0;

/**
 * Time window: 10 × time/division. With a known trigger point it sits PRE_TRIGGER_FRACTION into the
 * screen; without one the screen starts at the trace's start. The window stays inside the trace
 * when the trace is long enough to fill it.
 */
export function captureTimeWindow(
  timePerDivS: number,
  bounds: TraceBounds,
  triggerTimeS: number | null,
  preTrigger = PRE_TRIGGER_FRACTION,
): { t0: number; t1: number } {
  const span = SCREEN_DIVISIONS_X * timePerDivS;
  let t0 = triggerTimeS == null ? bounds.start : triggerTimeS - preTrigger * span;
  const length = bounds.end - bounds.start;
  if (length >= span) t0 = Math.min(Math.max(t0, bounds.start), bounds.end - span);
  else t0 = bounds.start;
  return { t0, t1: t0 + span };
}

/**
 * The capture view of one trace, levels in its channel's physical unit: the settings (volts/division,
 * ground offset, trigger level) are in the scope's unit and are scaled by the probe (`perScope`);
 * missing or invalid settings fall back to the trace's extent and its channel's range.
 */
export function captureView(trace: TraceInfo, cu: ChannelUnits = traceUnits(trace)): CaptureView {
  const s = trace.settings ?? ({} as TraceInfo["settings"]);
  const bounds = traceBounds(trace);
  const first = trace.analysis?.events?.[0]?.timeS;
  const triggerTimeS = typeof first === "number" && Number.isFinite(first) ? first : null;

  const timePerDivS = positive(s.timePerDivS)
    ? s.timePerDivS
    : Math.max(bounds.end - bounds.start, 1e-9) / SCREEN_DIVISIONS_X;
  const { t0, t1 } = captureTimeWindow(timePerDivS, bounds, triggerTimeS);

  let vMin: number;
  let vMax: number;
  let voltsPerDiv: number;
  if (positive(s.voltsPerDiv)) {
    voltsPerDiv = s.voltsPerDiv * cu.perScope;
    ({ min: vMin, max: vMax } = screenVoltageRange({ voltsPerDiv, groundOffsetDiv: s.groundOffsetDiv ?? 0 }));
  } else {
    const ch = trace.channels[0];
    const lo = Math.min((ch?.min ?? -1) * cu.fromFile, 0);
    const hi = Math.max((ch?.max ?? 1) * cu.fromFile, 0);
    voltsPerDiv = (hi - lo || 1) / SCREEN_DIVISIONS_Y;
    vMin = lo;
    vMax = lo + voltsPerDiv * SCREEN_DIVISIONS_Y;
  }
  const triggerLevel =
    typeof s.triggerLevel === "number" && Number.isFinite(s.triggerLevel) ? s.triggerLevel * cu.perScope : null;
  return { t0, t1, vMin, vMax, timePerDivS, voltsPerDiv, triggerTimeS, triggerLevel };
}

/** Union of the capture voltage ranges (overlay of several traces shares one level axis). */
export function unionRange(ranges: { vMin: number; vMax: number }[]): { vMin: number; vMax: number } {
  if (!ranges.length) return { vMin: -1, vMax: 1 };
  return { vMin: Math.min(...ranges.map((r) => r.vMin)), vMax: Math.max(...ranges.map((r) => r.vMax)) };
}

/** A level range that fits data extremes with a small margin (the "fit levels" toggle). */
export function fitRange(lo: number, hi: number, margin = 0.05): { vMin: number; vMax: number } {
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return { vMin: -1, vMax: 1 };
  if (hi - lo <= 0) {
    const pad = Math.abs(hi) * 0.1 || 1;
    return { vMin: lo - pad, vMax: hi + pad };
  }
  const pad = (hi - lo) * margin;
  return { vMin: lo - pad, vMax: hi + pad };
}
