/**
 * Crank sensor on a missing-tooth wheel (crank-wheel.ts): tooth times (falling zero crossings of a
 * VR sensor, or the falling edges of a Hall sensor about its mid level), tooth period, the gap and
 * the wheel's pattern (60-2, 36-1…), rpm from one revolution (gap to gap: 60 s over its time) or,
 * with a single gap, 60/(N·T) with T the tooth period and N the wheel's tooth positions (a 60-2
 * wheel: rpm = 1/T, trade reference); amplitude against speed, and damaged teeth. An unrecognised
 * wheel gives no rpm.
 */
import type { CaptureSettings } from "../schemas/capture-settings";
import { detectClipping } from "./clip";
import { detectTeeth, findGaps, matchWheel, type Gaps, type WheelMatch } from "./crank-wheel";
import { ENGINE_SAFETY } from "./findings";
import { fmt, fmtRate, fmtTime } from "./format";
import { measurePrepared } from "./measure";
import {
  clippedFinding,
  finishFindings,
  setting,
  triggerBeyondFinding,
  voltsPerDivFor,
  type FindingDraft,
} from "./review";
import { niceCeil, type Prepared } from "./signal";
import { blockSample, histogramQuantile, linearSlope, median, metricStats, robustLevelAndNoise } from "./stats";
import type { CrankEvent, CrankSummary, CrankWheel, Finding, Measurements, Suggestions } from "./types";

export { KNOWN_WHEELS } from "./crank-wheel";

export interface CrankContext {
  settings: Partial<CaptureSettings>;
  screen: { min: number; max: number } | null;
}

export interface CrankAnalysis {
  events: CrankEvent[];
  summary: CrankSummary;
  findings: Finding[];
  measurements: Measurements;
  suggestions: Suggestions;
}

/** Teeth on a 60-2 wheel between gaps. */
export const TEETH_60_2 = 58;
/** A tooth below this fraction of its neighbours' amplitude is flagged (common practice, no source). */
const DAMAGED_AMPLITUDE = 0.6;

/** Median of |T(k) − T(k−1)| / T(k) over consecutive periods, the gaps and their neighbours left out. */
function irregularity(periods: number[], gapIdx: number[]): number {
  const xs: number[] = [];
  for (let k = 1; k < periods.length; k++) {
    if (gapIdx.includes(k) || gapIdx.includes(k - 1)) continue;
    xs.push(Math.abs(periods[k] - periods[k - 1]) / periods[k]);
  }
  return xs.length ? (median(xs) ?? 0) : 0;
}

/** Most samples (80 %) sit within 15 % of the swing from its low or its high level: a switching sensor. */
function twoLevel(xs: Float32Array, lo: number, hi: number): boolean {
  const band = 0.15 * (hi - lo);
  if (!(band > 0) || xs.length === 0) return false;
  let at = 0;
  for (let i = 0; i < xs.length; i++) if (xs[i] <= lo + band || xs[i] >= hi - band) at++;
  return at >= 0.8 * xs.length;
}

/** Teeth of the signal, trying the other polarity when the first gives no clean gaps. */
function teethOf(p: Prepared): { g: Gaps; inverted: boolean; centre: number } {
  const { v, n } = p;
  const robust = n ? robustLevelAndNoise(v) : { median: 0, noise: 0 };
  // a VR sensor swings about zero (its resting level); a Hall sensor switches between two levels and
  // rests on either of them, so it is centred on the mid level even when its low level is 0 V
  const sampled = n ? blockSample(v) : v;
  const hiQ = n ? histogramQuantile(sampled, 0.99, p.min, p.max) : 0;
  const loQ = n ? histogramQuantile(sampled, 0.01, p.min, p.max) : 0;
  const nearZero = Math.abs(robust.median) < 0.2 * (hiQ - loQ);
  const centre = nearZero && !twoLevel(sampled, loQ, hiQ) ? robust.median : (hiQ + loQ) / 2;
  // hysteresis: clear of the noise, but never above 40 % of the swing (with few samples per tooth
  // the difference-based noise estimate reads the tooth signal itself)
  const swing = Math.min(hiQ - centre, centre - loQ);
  const h = Math.min(Math.max(5 * robust.noise, 0.1 * swing), 0.4 * swing);
  // the sensor's leads may be swapped: then the other crossing marks the teeth. The reverse pass
  // runs only when the forward one does not give clean gaps.
  const fwd = findGaps(detectTeeth(p, centre, h, 1));
  const rev = fwd.score > 0.1 || fwd.gapIdx.length === 0 ? findGaps(detectTeeth(p, centre, h, -1)) : null;
  const inverted = rev != null && (rev.score < fwd.score - 0.05 || (fwd.gapIdx.length === 0 && rev.gapIdx.length > 0));
  const picked = inverted && rev ? rev : fwd;
  // a toothed wheel's periods change smoothly from one tooth to the next (even while the engine
  // speeds up and slows down); crossings of noise do not
  const regular = irregularity(picked.periods, picked.gapIdx) <= 0.15;
  const none: Gaps = { teeth: [], amps: [], periods: [], gapIdx: [], ratios: [], gapPitches: 0, score: Infinity };
  return { g: regular ? picked : none, inverted, centre };
}

/** Tooth numbers counted from the gap (1 = first after it), null before the first gap is known. */
function toothNumbers(g: Gaps, teethPerRev: number | null): (number | null)[] {
  const toothNo: (number | null)[] = g.teeth.map(() => null);
  if (!g.gapIdx.length) return toothNo;
  for (let i = 0; i < g.gapIdx.length; i++) {
    const from = g.gapIdx[i] + 1;
    const to = i + 1 < g.gapIdx.length ? g.gapIdx[i + 1] : g.teeth.length - 1;
    for (let c = from; c <= to; c++) toothNo[c] = c - from + 1;
  }
  if (teethPerRev != null) for (let c = 0; c <= g.gapIdx[0]; c++) toothNo[c] = teethPerRev - (g.gapIdx[0] - c);
  return toothNo;
}

/** Damaged teeth: a small tooth among its neighbours, or a tooth missing outside the gap. */
function damagedTeeth(g: Gaps, toothNo: (number | null)[], teethPerRev: number): number[] {
  const { teeth, amps } = g;
  const count = new Map<number, number>();
  const mark = (no: number) => count.set(no, (count.get(no) ?? 0) + 1);
  const ampMedian = median(amps);
  for (let c = 0; c < teeth.length; c++) {
    const no = toothNo[c];
    if (no == null) continue;
    // any tooth (those beside the gap too) far below the typical tooth
    if (ampMedian != null && c < amps.length && amps[c] < 0.5 * ampMedian) {
      mark(no);
      continue;
    }
    // an inner tooth well below its neighbours (the teeth beside the gap swing differently)
    if (no <= 2 || no >= teethPerRev - 1) continue;
    const nb: number[] = [];
    for (let q = c - 3; q <= c + 3; q++) {
      if (q === c || q < 0 || q >= amps.length) continue;
      const nq = toothNo[q];
      if (nq != null && nq >= 2 && nq <= teethPerRev - 1) nb.push(amps[q]);
    }
    const ref = median(nb);
    if (ref != null && amps[c] < DAMAGED_AMPLITUDE * ref) mark(no);
  }
  const revs = Math.max(1, g.gapIdx.length);
  return [...count.entries()]
    .filter(([, c]) => c * 2 >= Math.min(revs, 2) || revs === 1)
    .map(([no]) => no)
    .sort((a, b) => a - b);
}

/** Amplitude per 1000 rpm and its slope against speed (Faraday's law: a VR sensor's output rises with speed). */
function amplitudeVsSpeed(
  g: Gaps,
  toothNo: (number | null)[],
  damaged: number[],
  positions: number | null,
  sc: number,
) {
  const perTooth: { amp: number; krpm: number }[] = [];
  if (positions != null) {
    for (let c = 1; c + 1 < g.teeth.length && c < g.amps.length; c++) {
      if (g.gapIdx.includes(c - 1) || g.gapIdx.includes(c)) continue;
      const no = toothNo[c];
      if (no != null && damaged.includes(no)) continue;
      const local = (g.teeth[c + 1] - g.teeth[c - 1]) / 2;
      if (local > 0) perTooth.push({ amp: g.amps[c] * sc, krpm: 60 / (positions * local) / 1000 });
    }
  }
  const ratio = median(perTooth.map((x) => x.amp / x.krpm));
  const speeds = perTooth.map((x) => x.krpm).sort((a, b) => a - b);
  let slope: number | null = null;
  if (speeds.length > 10 && speeds[Math.floor(speeds.length * 0.9)] > 1.2 * speeds[Math.floor(speeds.length * 0.1)]) {
    slope = linearSlope(
      perTooth.map((x) => x.krpm),
      perTooth.map((x) => x.amp),
    );
  }
  return { ratio, slope };
}

function wheelOf(m: WheelMatch | null): CrankWheel | null {
  if (!m) return null;
  return {
    pattern: `${m.positions}-${m.missing}`,
    positions: m.positions,
    missing: m.missing,
    teethPerRev: m.positions - m.missing,
    from: m.from,
  };
}

export function analyzeCrank(p: Prepared, ctx: CrankContext): CrankAnalysis {
  const sc = p.toPhysical;
  const measurements = measurePrepared(p, sc);
  const { g, inverted, centre } = teethOf(p);
  const { teeth, amps, periods, gapIdx } = g;
  const wheel = wheelOf(matchWheel(g));
  const perRev = wheel?.teethPerRev ?? null;
  const toothNo = toothNumbers(g, perRev);
  const normal = periods.filter((_, k) => !gapIdx.includes(k));
  const T = median(normal);
  const events: CrankEvent[] = gapIdx.map((k, i) => {
    const next = gapIdx[i + 1];
    const local = median(periods.slice(Math.max(0, k - 3), k).concat(periods.slice(k + 1, k + 4)));
    return {
      timeS: teeth[k],
      rpm: wheel && next != null ? 60 / (teeth[next + 1] - teeth[k + 1]) : null,
      teeth: next != null ? next - k : null,
      gapRatio: local ? periods[k] / local : 0,
    };
  });
  // rpm over whole revolutions (gap to gap), else 60/(N·T); none without a recognised wheel
  const whole = events.filter((e) => e.rpm != null).map((e) => 60 / (e.rpm as number));
  let rpm: number | null = null;
  if (wheel && whole.length) rpm = 60 / (whole.reduce((a, b) => a + b, 0) / whole.length);
  else if (wheel && T != null && T > 0) rpm = 60 / (wheel.positions * T);
  const damaged = wheel ? damagedTeeth(g, toothNo, wheel.teethPerRev) : [];
  const speed = amplitudeVsSpeed(g, toothNo, damaged, wheel?.positions ?? null, sc);
  const summary: CrankSummary = {
    eventCount: events.length,
    rpm,
    wheel,
    toothCount: teeth.length,
    gapTimesS: events.map((e) => e.timeS),
    toothPeriodMs: metricStats(normal.map((x) => x * 1e3)),
    amplitude: metricStats(amps.map((a) => a * sc)),
    amplitudePerKrpm: speed.ratio,
    amplitudeSlopePerKrpm: speed.slope,
    gapRatio: metricStats(events.map((e) => e.gapRatio)),
    damagedTeeth: damaged,
  };
  const drafts = reviewCrank(p, ctx, summary, g, inverted, T, centre);
  const oneRev = rpm != null ? niceCeil(60 / rpm / 8) : null;
  const ampMaxScope = summary.amplitude.max != null ? (summary.amplitude.max / 2 / sc) * p.toScope : null;
  const vpd = ampMaxScope != null ? voltsPerDivFor(ampMaxScope, ctx.settings) : null;
  const suggestions: Suggestions = {
    oneEvent:
      rpm != null && oneRev != null
        ? {
            timePerDivS: oneRev,
            voltsPerDiv: vpd,
            reason:
              `one revolution (60/rpm = ${fmt((60 / rpm) * 1e3, 3)} ms) with its gap across 8 of the 10 ` +
              `divisions (common practice, no source)`,
            text: `${fmtTime(oneRev)}/div${vpd != null ? `, ${setting(p, vpd, "div")}` : ""}`,
          }
        : null,
    allCylinders: null,
    triggerLevel: null,
    triggerText: null,
  };
  return { events, summary, findings: finishFindings(drafts, ENGINE_SAFETY), measurements, suggestions };
}

function reviewCrank(
  p: Prepared,
  ctx: CrankContext,
  summary: CrankSummary,
  g: Gaps,
  inverted: boolean,
  T: number | null,
  centre: number,
): FindingDraft[] {
  const drafts: FindingDraft[] = [];
  const { teeth, gapIdx } = g;
  const wheel = summary.wheel;
  if (teeth.length < 10) {
    drafts.push({
      code: "no-events",
      severity: "problem",
      message:
        "No crank teeth found: the signal does not swing about its middle often enough, or not at a regular pace.",
      advice:
        "Probe the crank sensor's signal wire with the engine cranking or running, at a time/division that shows at least one revolution.",
      caution: true,
    });
  } else if (gapIdx.length === 0) {
    drafts.push({
      code: "no-gap",
      severity: "warning",
      message:
        `No missing-tooth gap among ${teeth.length} teeth: the capture is shorter than a revolution, or ` +
        `the wheel has no gap. Without the wheel's pattern no rpm is given.`,
      advice: "Capture at least two full revolutions, so the gap shows twice.",
      caution: true,
    });
  } else if (!wheel) {
    const pitches = g.gapPitches;
    const counts = gapIdx.slice(1).map((k, i) => k - gapIdx[i]);
    drafts.push({
      code: "unknown-wheel",
      severity: "warning",
      message: `The wheel is not one Burnline recognises: its gap spans ${pitches} tooth pitches${
        counts.length
          ? ` with ${[...new Set(counts)].join(", ")} teeth between gaps`
          : " and only one gap is in the capture"
      }. No rpm is given.`,
      advice:
        "Capture at least two full revolutions; if the wheel has several gaps or an uncommon pattern, read the " +
        "rpm from another signal.",
      caution: true,
    });
  }
  if (wheel) {
    const off = gapIdx
      .slice(1)
      .map((k, i) => k - gapIdx[i])
      .filter((c) => c !== wheel.teethPerRev);
    if (off.length) {
      drafts.push({
        code: "tooth-count",
        severity: "warning",
        message:
          `${off.join(", ")} teeth counted between gaps instead of ${wheel.teethPerRev} (a ` +
          `${wheel.pattern} wheel): teeth are missed or extra edges are seen.`,
        advice: "Check the sensor's air gap and wiring, and the wheel for damage or debris.",
        caution: true,
      });
    }
  }
  const damaged = summary.damagedTeeth;
  if (damaged.length) {
    drafts.push({
      code: "damaged-tooth",
      severity: "warning",
      message:
        `Tooth ${damaged.join(", ")} (counted from the gap) reads weak or missing in the sensor signal: a ` +
        `damaged tooth or debris on the wheel.`,
      advice:
        "Inspect the reluctor wheel at that tooth (count from the gap in the direction of rotation) as the maker's procedure describes.",
      caution: true,
    });
  }
  if (inverted && teeth.length >= 10) {
    drafts.push({
      code: "inverted",
      severity: "info",
      message:
        "Each tooth gives a negative lobe before its positive one: the sensor's two wires are probably swapped " +
        "(or the probe is).",
      advice:
        "Check the sensor's wiring against the maker's diagram; some control units read a reversed sensor late or not at all.",
      caution: true,
    });
  }
  if (T != null && T * p.rate < 20) {
    drafts.push({
      code: "undersampled",
      severity: "warning",
      message:
        `Only ${Math.round(T * p.rate)} samples per tooth at ${fmtRate(p.rate)}: tooth edges and ` +
        `amplitudes are read coarsely.`,
      advice: `Capture at ${fmtRate(niceCeil(40 / T))} or faster.`,
      caution: true,
    });
  }
  const noise = p.n ? robustLevelAndNoise(p.v).noise : 0;
  const clipped = clippedFinding(p, detectClipping(p, centre, ctx.screen, noise), ctx.settings, "the tooth amplitudes");
  if (clipped) drafts.push(clipped);
  const t = triggerBeyondFinding(p, ctx.settings, centre * p.toScope);
  if (t) drafts.push(t);
  return drafts;
}
