import type { CaptureSettings } from "../schemas/capture-settings";
import { detectClipping } from "./clip";
import { ENGINE_SAFETY } from "./findings";
import { measurePrepared } from "./measure";
import { clippedFinding, finishFindings, setting, triggerBeyondFinding, type FindingDraft } from "./review";
import type { Prepared } from "./signal";
import { robustLevelAndNoise } from "./stats";
import type { Finding, GenericSummary, Measurements, Suggestions } from "./types";

export interface GenericContext {
  settings: Partial<CaptureSettings>;
  screen: { min: number; max: number } | null;
}

/** Any other capture: the generic measurements, and the review that applies to every capture. */
export function analyzeGeneric(
  p: Prepared,
  ctx: GenericContext,
): {
  events: never[];
  summary: GenericSummary;
  findings: Finding[];
  measurements: Measurements;
  suggestions: Suggestions;
} {
  const measurements = measurePrepared(p, p.toPhysical);
  const drafts: FindingDraft[] = [];
  const { median: base, noise } = p.n ? robustLevelAndNoise(p.v) : { median: 0, noise: 0 };
  const clipped = clippedFinding(
    p,
    detectClipping(p, base, ctx.screen, noise),
    ctx.settings,
    "its highest or lowest parts",
  );
  if (clipped) drafts.push(clipped);
  // the middle of the two state levels, in the scope's unit
  const midPhysical = (measurements.baseLevel + measurements.topLevel) / 2;
  const mid =
    Number.isFinite(midPhysical) && p.toPhysical
      ? Number(((midPhysical / p.toPhysical) * p.toScope).toPrecision(2))
      : null;
  const t = triggerBeyondFinding(p, ctx.settings, mid);
  if (t) drafts.push(t);
  const tpd = measurements.periodS != null ? Number(((measurements.periodS * 2) / 10).toPrecision(2)) : null;
  return {
    events: [],
    summary: { ...measurements, eventCount: 0, rpm: null },
    findings: finishFindings(drafts, ENGINE_SAFETY),
    measurements,
    suggestions: {
      oneEvent:
        tpd != null
          ? { timePerDivS: tpd, voltsPerDiv: null, reason: "two periods across the 10 divisions", text: `${tpd} s/div` }
          : null,
      allCylinders: null,
      triggerLevel: mid,
      triggerText: mid != null ? setting(p, mid) : null,
    },
  };
}
