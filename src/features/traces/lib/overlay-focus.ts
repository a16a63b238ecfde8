/**
 * The window an overlay opens at: zoomed on the firing events, not the capture's time/division
 * (at 10 ms/div a 1.5 ms burn is a few pixels wide). Times are display times: 0 is each trace's
 * alignment point (its first firing). Pure.
 */
import { SCREEN_DIVISIONS_X } from "../../../../shared/schemas/capture-settings";
import type { TraceAnalysis } from "../types";
import { niceStep } from "./grid";
import { PRE_TRIGGER_FRACTION } from "./capture-view";

const finite = (x: unknown): x is number => typeof x === "number" && Number.isFinite(x);

/**
 * How long the first event lasts after its firing, seconds: the spark line's end (secondary
 * ignition), else the burn time, else an injector's pulse width; null when the analysis says none.
 */
export function firstEventLength(analysis: Pick<TraceAnalysis, "events"> | null | undefined): number | null {
  const e = analysis?.events?.[0];
  if (!e || !finite(e.timeS)) return null;
  if (finite(e.sparkEndS) && e.sparkEndS > e.timeS) return e.sparkEndS - e.timeS;
  if (finite(e.burnTimeMs) && e.burnTimeMs > 0) return e.burnTimeMs / 1000;
  const pw = (e as { pulseWidthMs?: unknown }).pulseWidthMs;
  if (finite(pw) && pw > 0) return pw / 1000;
  return null;
}

/**
 * The opening window: the longest first event of the traces shown, with as much again after it
 * (the coil's ringing), the firing PRE_TRIGGER_FRACTION into the screen, and a span of ten
 * divisions of a 1-2-5 step so the grid reads like a scope's. Null when no trace has an event length
 * (the capture view is used), or when the capture view is already as narrow.
 */
export function firingFocus(lengths: (number | null)[], captureSpan: number): { t0: number; t1: number } | null {
  const longest = Math.max(0, ...lengths.filter(finite));
  if (!(longest > 0)) return null;
  const wanted = (longest * 2) / (1 - PRE_TRIGGER_FRACTION);
  const span = niceStep(wanted / SCREEN_DIVISIONS_X) * SCREEN_DIVISIONS_X;
  if (!(span < captureSpan)) return null;
  const t0 = -PRE_TRIGGER_FRACTION * span;
  return { t0, t1: t0 + span };
}
