/**
 * Secondary ignition, findings stage: the capture review and the suggested framing. Levels are said
 * in the physical unit; scope settings in the scope's unit with the physical value beside them; the
 * safety caution once, with the first advice.
 */
import type { CaptureSettings } from "../schemas/capture-settings";
import type { ClipInfo } from "./clip";
import { SECONDARY_SAFETY } from "./findings";
import { fmt, fmtRate, fmtTime } from "./format";
import { finishFindings, physical, screenRange, setting, voltsPerDivFor, type FindingDraft } from "./review";
import type { RawEvent } from "./secondary-events";
import type { SecondaryLevels } from "./secondary-levels";
import { niceCeil, roundNice, type Prepared } from "./signal";
import { modifiedZScores } from "./stats";
import type { Finding, SecondaryEvent, SecondarySummary, Suggestions } from "./types";

export interface SecondaryReviewInput {
  p: Prepared;
  lv: SecondaryLevels;
  raw: RawEvent[];
  events: SecondaryEvent[];
  summary: SecondarySummary;
  clip: ClipInfo;
  /** the clipping ceiling on the firing side (y), or null */
  ceiling: number | null;
  settings: Partial<CaptureSettings>;
  /** the pickup sees every cylinder's firing but the number of cylinders was not given (4 assumed) */
  cylindersAssumed?: boolean;
}

function clippingFinding(r: SecondaryReviewInput): FindingDraft | null {
  const { p, lv, clip, events, settings: s } = r;
  if (!clip.top && !clip.bottom) return null;
  const clippedEvents = events.filter((e) => e.clipped).length;
  const where = clip.top && clip.bottom ? "top and bottom" : clip.top ? "top" : "bottom";
  const cutY = r.ceiling != null ? r.ceiling : lv.ymax;
  const lowerBound = clippedEvents
    ? ` Those firing lines read low: the real firing line is above ${physical(p, Math.min(cutY, lv.ymax))}.`
    : "";
  const firingSide = lv.sign > 0 ? clip.top : clip.bottom;
  const vpd = s.voltsPerDiv
    ? niceCeil(s.voltsPerDiv * 2)
    : firingSide
      ? voltsPerDivFor(2 * cutY * p.toScope, s, lv.sign > 0)
      : null;
  return {
    code: "clipped",
    severity: "warning",
    message:
      `The trace sits flat against the ${where} of the scope's range` +
      (events.length ? ` in ${clippedEvents} of ${events.length} firing lines.` : ".") +
      lowerBound,
    advice: `Raise volts/division${vpd ? ` to ${setting(p, vpd, "div")} or more` : ""}, or move the ground offset ${
      clip.top ? "down" : "up"
    }, so the whole firing line stays on the screen, then capture again.`,
    caution: true,
  };
}

function samplingFinding(r: SecondaryReviewInput): FindingDraft | null {
  const { p, summary } = r;
  const rate = p.rate;
  const medianBurnS = summary.burnTimeMs.median != null ? summary.burnTimeMs.median / 1e3 : null;
  const sparkSamples = medianBurnS != null ? medianBurnS * rate : null;
  const reasons: string[] = [];
  let severity: "warning" | "problem" | null = null;
  if (sparkSamples != null && sparkSamples < 20) {
    reasons.push(
      `only ${Math.round(sparkSamples)} samples across the spark line (20 or more are needed to measure it)`,
    );
    severity = "problem";
  }
  if (rate < 100e3) {
    reasons.push(
      `a sample every ${fmtTime(1 / rate)} cannot catch the firing line, which rises and falls within ` +
        `microseconds: below 100 kS/s the peak heights cannot be trusted`,
    );
    severity = "problem";
  } else if (rate < 1e6) {
    reasons.push(
      `at ${fmtRate(rate)} the firing line's peak can fall between samples and read low: 1 MS/s or more is the ` +
        `usual practice for peak heights`,
    );
    severity = severity ?? "warning";
  }
  if (!severity) return null;
  return {
    code: "undersampled",
    severity,
    message: `Undersampled capture: ${reasons.join("; ")}.`,
    advice: "Capture again at 1 MS/s or faster (shorten the time/division or raise the sample-rate setting).",
    caution: true,
  };
}

function noiseFinding(r: SecondaryReviewInput): FindingDraft | null {
  const { p, lv, summary } = r;
  const burnLevelY = summary.burnLevel.median != null ? summary.burnLevel.median / p.toPhysical : null;
  if (burnLevelY == null || !(burnLevelY > 0) || !(lv.noise > 0.15 * burnLevelY)) return null;
  return {
    code: "noisy",
    severity: "warning",
    message:
      `Noisy capture: the noise (${physical(p, lv.noise)} RMS) is ` +
      `${Math.round((100 * lv.noise) / burnLevelY)} % of the spark line's level.`,
    advice:
      "Lay the pickup flat on top of the coil, as close as it goes, away from the other coils' wiring; keep the " +
      "scope's ground lead short and on clean engine ground.",
    caution: true,
  };
}

/** A trigger level (scope units) at half the lowest firing line, or null. */
function suggestedTrigger(r: SecondaryReviewInput): number | null {
  const { p, lv, raw } = r;
  if (!raw.length) return null;
  const minPeakY = Math.min(...raw.map((e) => e.apex.height));
  return roundNice((lv.base + lv.sign * 0.5 * minPeakY) * p.toScope);
}

function triggerFinding(r: SecondaryReviewInput, sugg: number | null): FindingDraft | null {
  const { p, lv, settings: s } = r;
  if (s.triggerLevel == null || p.n === 0 || !(p.toScope > 0)) return null;
  const yl = lv.sign * (s.triggerLevel / p.toScope - lv.base);
  const ymax = lv.sign > 0 ? p.max - lv.base : lv.base - p.min;
  const ymin = lv.sign > 0 ? p.min - lv.base : lv.base - p.max;
  const level = setting(p, s.triggerLevel);
  const better =
    sugg != null
      ? ` A level of about ${setting(p, sugg)} (half the lowest firing ` +
        `line${lv.sign < 0 ? ", falling slope" : ""}) gives a stable display.`
      : "";
  if (yl > ymax || yl < ymin) {
    return {
      code: "trigger-above-signal",
      severity: "warning",
      message:
        `The trigger level (${level}) is beyond anything the signal reaches, so the scope would never ` +
        `trigger on it.`,
      advice: `Bring the trigger level inside the firing lines.${better}`,
      caution: true,
    };
  }
  if (Math.abs(yl) < Math.max(4 * lv.noise, 1e-12)) {
    return {
      code: "trigger-below-noise",
      severity: "warning",
      message:
        `The trigger level (${level}) sits within the baseline's noise (about ${physical(p, lv.noise)}), ` +
        `so the display would trigger at random.`,
      advice: `Raise the trigger level clear of the noise and the spark line.${better}`,
      caution: true,
    };
  }
  return null;
}

interface Framing {
  oneEvent: Suggestions["oneEvent"];
  allCylinders: Suggestions["allCylinders"];
  finding: FindingDraft | null;
}

function framing(r: SecondaryReviewInput): Framing {
  const { p, lv, raw, summary, clip, settings: s } = r;
  if (!raw.length) return { oneEvent: null, allCylinders: null, finding: null };
  const maxPeakY = Math.max(...raw.map((e) => e.apex.height));
  const clipSide = lv.sign > 0 ? clip.top : clip.bottom;
  const peakScope = maxPeakY * p.toScope;
  const vpd = voltsPerDivFor(peakScope * (clipSide ? 2 : 1), s, lv.sign > 0);
  const vpdText = vpd != null ? `, ${setting(p, vpd, "div")}` : "";
  const dwellMsMed = summary.dwellMs.median ?? 0;
  const spanMs = dwellMsMed + (summary.burnTimeMs.median ?? 0) + 1.5;
  const tpd = Math.max(0.5e-3, niceCeil(spanMs / 1e3 / 8));
  const oneEvent = {
    timePerDivS: tpd,
    voltsPerDiv: vpd,
    reason:
      `one event (${dwellMsMed ? "dwell, " : ""}firing line, spark line and ringing, about ` +
      `${fmt(spanMs, 2)} ms) across 8 of the 10 divisions with 10–20 % pre-trigger; the highest firing line at ` +
      `about 80 % of the divisions ${lv.sign > 0 ? "above" : "below"} ground (common practice, no source)`,
    text: `${fmtTime(tpd)}/div${vpdText}`,
  };
  let allCylinders: Suggestions["allCylinders"] = null;
  if (summary.rpm != null) {
    const cycle = 120 / summary.rpm;
    const t = niceCeil((cycle * 1.1) / 10);
    allCylinders = {
      timePerDivS: t,
      voltsPerDiv: vpd,
      reason:
        `one engine cycle (120/rpm = ${fmt(cycle * 1e3, 3)} ms at ${Math.round(summary.rpm)} rpm) across ` +
        `the 10 divisions, so every cylinder fires once on screen (common practice, no source)`,
      text: `${fmtTime(t)}/div${vpdText}`,
    };
  }
  const notes: string[] = [];
  if (s.timePerDivS != null && s.timePerDivS * 10 < (summary.burnTimeMs.median ?? 0) / 1e3 + 0.5e-3) {
    notes.push(
      `time/division (${fmtTime(s.timePerDivS)}/div) is too short to show a whole event: use ${fmtTime(tpd)}/div`,
    );
  }
  // a firing line recorded past the screen's edge: whole in the file, cut off on the tech's screen
  const screen = screenRange(p.units, s);
  if (screen && s.voltsPerDiv != null && !clipSide && vpd != null) {
    const edge = lv.sign > 0 ? screen.max : screen.min;
    const past = lv.sign * (lv.base + lv.sign * maxPeakY - edge);
    if (past > 0.005 * (screen.max - screen.min)) {
      notes.push(
        `the highest firing line (${physical(p, maxPeakY)}) goes past the ${lv.sign > 0 ? "top" : "bottom"} of the ` +
          `screen at ${setting(p, s.voltsPerDiv, "div")} (the file holds it whole; on the scope it is cut off): use ` +
          `${setting(p, vpd, "div")}`,
      );
    }
  }
  if (s.voltsPerDiv != null && !clipSide && vpd != null && peakScope / s.voltsPerDiv < 1.5) {
    notes.push(
      `the highest firing line is only ${fmt(peakScope / s.voltsPerDiv, 2)} divisions tall at ` +
        `${setting(p, s.voltsPerDiv, "div")}: use ${setting(p, vpd, "div")}`,
    );
  }
  const finding: FindingDraft | null = notes.length
    ? {
        code: "framing",
        severity: "info",
        message: `The capture view could frame the events better: ${notes.join("; ")}.`,
        advice: `For one event: ${oneEvent.text}. ${oneEvent.reason}.`,
        caution: true,
      }
    : null;
  return { oneEvent, allCylinders, finding };
}

function erraticFinding(r: SecondaryReviewInput): FindingDraft | null {
  const { p, events } = r;
  if (events.length < 4) return null;
  const peaks = events.map((e) => e.peak);
  const z = modifiedZScores(peaks);
  if (!z) return null;
  const odd = peaks.filter((_, k) => z.outlier[k]);
  if (!odd.length) return null;
  const pct = Math.min(...odd.map((x) => Math.abs(x - z.median) / Math.abs(z.median))) * 100;
  return {
    code: "erratic-firing",
    severity: "warning",
    message:
      `The firing line changes from event to event: ${odd.length} of ${events.length} firing lines are ` +
      `${Math.floor(pct)} % or more away from the usual ${physical(p, z.median / p.toPhysical)}.`,
    advice:
      "An erratic firing line on one coil points to the coil breaking down or a plug or lead fault; compare with " +
      "the other cylinders, then test the coil by the maker's procedure.",
    caution: true,
  };
}

export function reviewSecondary(r: SecondaryReviewInput): { findings: Finding[]; suggestions: Suggestions } {
  const { p, lv, events } = r;
  const drafts: (FindingDraft | null)[] = [clippingFinding(r)];
  if (lv.sign < 0) {
    drafts.push({
      code: "inverted",
      severity: "info",
      message: "The firing lines point below the baseline (inverted capture). They are measured as magnitudes.",
      advice:
        "Use the scope's invert function, or turn the pickup over on the coil, so the firing lines point up; set " +
        "the trigger slope to match.",
      caution: true,
    });
  }
  if (events.length > 0 || p.n > 0) drafts.push(samplingFinding(r));
  if (events.length === 0) {
    drafts.push({
      code: "no-events",
      severity: "problem",
      message: "No firing events found in this capture.",
      advice:
        "Check that the pickup sits flat on the coil or clips round the plug lead, that the engine was running, " +
        "and that time/division is long enough to hold at least one firing (one engine cycle is 120/rpm seconds).",
      caution: true,
    });
  }
  drafts.push(noiseFinding(r));
  const trig = suggestedTrigger(r);
  drafts.push(triggerFinding(r, trig));
  const f = framing(r);
  drafts.push(f.finding, erraticFinding(r));
  if (r.cylindersAssumed) {
    drafts.push({
      code: "cylinders-assumed",
      severity: "info",
      message:
        `The number of cylinders was not given; ${r.summary.firingsPerCycle} was assumed for the rpm of a ` +
        `pickup that sees every cylinder's firing.`,
      advice: "Enter the engine's number of cylinders in the capture settings.",
    });
  }
  const findings = finishFindings(
    drafts.filter((d): d is FindingDraft => d != null),
    SECONDARY_SAFETY,
  );
  return {
    findings,
    suggestions: {
      oneEvent: f.oneEvent,
      allCylinders: f.allCylinders,
      triggerLevel: trig,
      triggerText: trig != null ? setting(p, trig) : null,
    },
  };
}
