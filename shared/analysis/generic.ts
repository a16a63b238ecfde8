import { measurePrepared } from "./measure";
import { clippedFinding, triggerBeyondFinding } from "./review";
import type { Prepared } from "./signal";
import { robustLevelAndNoise } from "./stats";
import type { CaptureSettings } from "../schemas/capture-settings";
import type { Finding, GenericSummary, Measurements, Suggestions } from "./types";

export interface GenericContext {
  settings: Partial<CaptureSettings>;
  screen: { min: number; max: number } | null;
}

/** Any other capture: the generic measurements, and the review that applies to every capture. */
export function analyzeGeneric(
  p: Prepared,
  ctx: GenericContext,
): { unit: string; events: never[]; summary: GenericSummary; findings: Finding[]; measurements: Measurements; suggestions: Suggestions } {
  const measurements = measurePrepared(p, p.toBase);
  const findings: Finding[] = [];
  const base = p.n ? robustLevelAndNoise(p.v).median : 0;
  const clipped = clippedFinding(p, base, ctx.screen, ctx.settings, "its highest or lowest parts");
  if (clipped) findings.push(clipped);
  const mid = (measurements.baseLevel + measurements.topLevel) / 2;
  const t = triggerBeyondFinding(p, ctx.settings, Number.isFinite(mid) ? Number(mid.toPrecision(2)) : null);
  if (t) findings.push(t);
  return {
    unit: p.baseUnit,
    events: [],
    summary: { ...measurements, eventCount: 0, rpm: null },
    findings,
    measurements,
    suggestions: {
      oneEvent:
        measurements.periodS != null
          ? {
              timePerDivS: Number((measurements.periodS * 2 / 10).toPrecision(2)),
              voltsPerDiv: null,
              reason: "two periods across the 10 divisions",
            }
          : null,
      allCylinders: null,
      triggerLevel: Number.isFinite(mid) ? Number(mid.toPrecision(2)) : null,
    },
  };
}
