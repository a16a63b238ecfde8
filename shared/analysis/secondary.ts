/**
 * Secondary ignition (capacitive pickup on a coil or plug lead): the firing events and their
 * measurements, then the capture review. Stages, each in its own module:
 * levels (secondary-levels) → find events (secondary-events, with the apex in secondary-apex, the
 * spark line in secondary-spark and the ringing in secondary-ringing) → dwell (secondary-dwell) →
 * results in the physical unit (here) → findings and suggestions (secondary-review).
 */
import type { CaptureSettings } from "../schemas/capture-settings";
import { detectClipping, type ClipInfo } from "./clip";
import { findFirings, type RawEvent } from "./secondary-events";
import { secondaryLevels, type SecondaryLevels } from "./secondary-levels";
import { dropDwellStarts, measureDwell } from "./secondary-dwell";
import { reviewSecondary } from "./secondary-review";
import { timeAtFrac, timeAtOf, type Prepared } from "./signal";
import { metricStats } from "./stats";
import type { Finding, SecondaryEvent, SecondarySummary, Suggestions } from "./types";

export { RINGING_PEAK_FRACTION } from "./secondary-ringing";

export interface SecondaryContext {
  settings: Partial<CaptureSettings>;
  wasteSpark: boolean;
  /** the pickup sees every cylinder's firing: `cylinders` firings per engine cycle */
  everyCylinder?: boolean;
  cylinders?: number;
  /** screen range in stored units, when volts/division is known */
  screen: { min: number; max: number } | null;
}

export interface SecondaryAnalysis {
  events: SecondaryEvent[];
  summary: SecondarySummary;
  findings: Finding[];
  suggestions: Suggestions;
}

/** The firing side's ceiling (y) above which a firing line counts as clipped, or null. */
function clipCeiling(lv: SecondaryLevels, clip: ClipInfo, screen: SecondaryContext["screen"]): number | null {
  const cut = lv.sign > 0 ? clip.topLevel : clip.bottomLevel;
  if (cut == null) return null;
  const tol = screen ? 0.005 * (screen.max - screen.min) : 1e-6 * Math.abs(cut - lv.base);
  return lv.sign * (cut - lv.base) - tol;
}

function toEvent(p: Prepared, e: RawEvent, ceiling: number | null): SecondaryEvent {
  const k = p.toPhysical;
  const peak = e.apex.height * k;
  const level = e.burnLevelY * k;
  const slope = e.slopeYPerS == null ? null : e.slopeYPerS * 1e-3 * k;
  // ratios need a spark line clear of zero
  const levelOk = e.burnLevelY > 0.01 * e.apex.height && e.burnLevelY > 0;
  return {
    timeS: timeAtFrac(p, e.apex.at),
    peak,
    burnTimeMs: e.burnS * 1e3,
    burnLevel: level,
    oscillations: e.oscillations,
    sparkSlope: slope,
    firingToSpark: levelOk ? e.apex.height / e.burnLevelY : null,
    sparkSlopePctPerMs: levelOk && e.slopeYPerS != null ? (100 * e.slopeYPerS * 1e-3) / e.burnLevelY : null,
    dwellMs: e.dwellS == null ? null : e.dwellS * 1e3,
    ringingHz: e.ringingHz,
    sparkStartS: timeAtOf(p, e.apex.index),
    sparkEndS: timeAtFrac(p, e.endFrac),
    clipped: ceiling != null && e.apex.rawPeak >= ceiling,
  };
}

function summarise(p: Prepared, lv: SecondaryLevels, events: SecondaryEvent[], perCycle: number): SecondarySummary {
  let rpm: number | null = null;
  if (events.length >= 2) {
    const periods: number[] = [];
    for (let k = 1; k < events.length; k++) periods.push(events[k].timeS - events[k - 1].timeS);
    periods.sort((x, y) => x - y);
    const mid = periods.length >> 1;
    const period = periods.length % 2 ? periods[mid] : (periods[mid - 1] + periods[mid]) / 2;
    if (period > 0) rpm = 120 / (period * perCycle);
  }
  const stats = (key: keyof SecondaryEvent) => metricStats(events.map((e) => e[key] as number | null));
  return {
    eventCount: events.length,
    rpm,
    firingsPerCycle: perCycle,
    peak: stats("peak"),
    burnTimeMs: stats("burnTimeMs"),
    burnLevel: stats("burnLevel"),
    oscillations: stats("oscillations"),
    sparkSlope: stats("sparkSlope"),
    firingToSpark: stats("firingToSpark"),
    sparkSlopePctPerMs: stats("sparkSlopePctPerMs"),
    dwellMs: stats("dwellMs"),
    ringingHz: stats("ringingHz"),
    polarity: lv.sign > 0 ? "positive" : "negative",
    baseline: lv.base * p.toPhysical,
    noise: lv.noise * p.toPhysical,
  };
}

export function analyzeSecondary(p: Prepared, ctx: SecondaryContext): SecondaryAnalysis {
  const lv = secondaryLevels(p);
  const raw = dropDwellStarts(p, lv, findFirings(p, lv));
  measureDwell(p, lv, raw);
  const clip = detectClipping(p, lv.base, ctx.screen, lv.noise);
  const ceiling = clipCeiling(lv, clip, ctx.screen);
  const events = raw.map((e) => toEvent(p, e, ceiling));
  // firings per engine cycle: one cylinder's coil or lead fires once per 720°, a waste-spark coil
  // twice, a distributor's coil wire once for every cylinder (cylinders assumed 4 when not given)
  const cylinders = Math.max(1, Math.round(ctx.cylinders ?? 4));
  const perCycle = ctx.everyCylinder ? cylinders : ctx.wasteSpark ? 2 : 1;
  const summary = summarise(p, lv, events, perCycle);
  const { findings, suggestions } = reviewSecondary({
    p,
    lv,
    raw,
    events,
    summary,
    clip,
    ceiling,
    settings: ctx.settings,
    cylindersAssumed: !!ctx.everyCylinder && ctx.cylinders == null,
  });
  return { events, summary, findings, suggestions };
}
