import { ENGINE_SAFETY, withSafety } from "./findings";
import { fmt, fmtRate } from "./format";
import { measurePrepared } from "./measure";
import { clippedFinding, triggerBeyondFinding } from "./review";
import { niceCeil, timeAtFrac, type Prepared } from "./signal";
import { blockSample, histogramQuantile, linearSlope, median, metricStats, robustLevelAndNoise } from "./stats";
import type { CaptureSettings } from "../schemas/capture-settings";
import type { CrankEvent, CrankSummary, Finding, Measurements, Suggestions } from "./types";

export interface CrankContext {
  settings: Partial<CaptureSettings>;
  screen: { min: number; max: number } | null;
}

export interface CrankAnalysis {
  unit: string;
  events: CrankEvent[];
  summary: CrankSummary;
  findings: Finding[];
  measurements: Measurements;
  suggestions: Suggestions;
}

/** Teeth on a 60-2 wheel between gaps. */
export const TEETH_60_2 = 58;
/** A period this many times its neighbours' is the missing-tooth gap (3 on a 60-2 wheel). */
const GAP_RATIO_MIN = 2.4;
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

/** One pass over the signal: tooth crossings, their amplitudes, periods and gaps (see analyzeCrank). */
function detectTeeth(p: Prepared, centre: number, h: number, sc: number, dir: 1 | -1) {
  const { v, n } = p;
  const teeth: number[] = [];
  const amps: number[] = [];
  let state = 0; // 0: not armed yet, 1: above +h seen, −1: after a tooth's crossing
  let lastDown = -1;
  let posMax = -Infinity;
  let negMin = Infinity;
  let pendingPos = 0;
  let prev = dir * (v[0] - centre);
  for (let i = 1; i < n; i++) {
    const x = dir * (v[i] - centre);
    if (prev >= 0 && x < 0) lastDown = i;
    prev = x;
    if (state >= 0) {
      if (x > posMax) posMax = x;
      if (x > h) state = 1;
      if (state === 1 && x < -h && lastDown > 0) {
        const a = dir * (v[lastDown - 1] - centre);
        const b = dir * (v[lastDown] - centre);
        teeth.push(timeAtFrac(p, lastDown - 1 + (a !== b ? a / (a - b) : 0)));
        pendingPos = posMax;
        negMin = x;
        state = -1;
      }
    } else {
      if (x < negMin) negMin = x;
      if (x > h) {
        amps.push((pendingPos - negMin) * sc);
        state = 1;
        posMax = x;
      }
    }
  }
  if (state === -1) amps.push((pendingPos - negMin) * sc);
  // a tooth too weak to cross the hysteresis leaves a double period: put it back with amplitude 0
  // (so the teeth after it keep their numbers, and it is flagged as damaged)
  const scratch = new Float64Array(6);
  // period k over the median of up to three periods either side of it
  const localRatio = (per: number[], k: number) => {
    let m = 0;
    for (let q = k - 3; q <= k + 3; q++) {
      if (q === k || q < 0 || q >= per.length) continue;
      // insertion into the sorted scratch
      let j = m++;
      const x = per[q];
      while (j > 0 && scratch[j - 1] > x) {
        scratch[j] = scratch[j - 1];
        j--;
      }
      scratch[j] = x;
    }
    if (m === 0) return 0;
    const ref = m % 2 ? scratch[m >> 1] : (scratch[(m >> 1) - 1] + scratch[m >> 1]) / 2;
    return ref > 0 ? per[k] / ref : 0;
  };
  {
    const per: number[] = [];
    for (let k = 1; k < teeth.length; k++) per.push(teeth[k] - teeth[k - 1]);
    for (let k = per.length - 1; k >= 0; k--) {
      const r = localRatio(per, k);
      if (r > 1.6 && r < 2.4 && k < amps.length) {
        teeth.splice(k + 1, 0, (teeth[k] + teeth[k + 1]) / 2);
        amps.splice(k + 1, 0, 0);
      }
    }
  }
  const periods: number[] = [];
  for (let k = 1; k < teeth.length; k++) periods.push(teeth[k] - teeth[k - 1]);
  const gapIdx: number[] = []; // index k of the period teeth[k] → teeth[k+1] that is the gap
  const ratios: number[] = [];
  for (let k = 0; k < periods.length; k++) {
    const r = localRatio(periods, k);
    if (r > GAP_RATIO_MIN && r < 4.5) {
      gapIdx.push(k);
      ratios.push(r);
    }
  }
  // how far the gaps are from 3 pitches (lower is cleaner)
  const score = ratios.length ? ratios.reduce((acc, r) => acc + Math.abs(r - 3), 0) / ratios.length : Infinity;
  return { teeth, amps, periods, gapIdx, score };
}

/**
 * Crank sensor on a 60-2 wheel: tooth times (falling zero crossings of a VR sensor, or the falling
 * edges of a Hall sensor about its mid level), tooth period, the missing-tooth gap, rpm = 1/T (T the
 * tooth period in s: one revolution is 60 pitches), amplitude against speed, and damaged teeth.
 */
export function analyzeCrank(p: Prepared, ctx: CrankContext): CrankAnalysis {
  const { v, n, rate } = p;
  const sc = p.toBase;
  const unit = p.baseUnit;
  const s = ctx.settings;
  const findings: Finding[] = [];
  const measurements = measurePrepared(p, sc);
  const robust = n ? robustLevelAndNoise(v) : { median: 0, noise: 0 };
  // a VR sensor swings about zero; a Hall sensor between two levels: centre on the mid level
  const sampled = n ? blockSample(v) : v;
  const hiQ = n ? histogramQuantile(sampled, 0.99, p.min, p.max) : 0;
  const loQ = n ? histogramQuantile(sampled, 0.01, p.min, p.max) : 0;
  const centre = Math.abs(robust.median) < 0.2 * (hiQ - loQ) ? robust.median : (hiQ + loQ) / 2;
  // hysteresis: clear of the noise, but never above 40 % of the swing (with few samples per tooth
  // the difference-based noise estimate reads the tooth signal itself)
  const swing = Math.min(hiQ - centre, centre - loQ);
  const h = Math.min(Math.max(5 * robust.noise, 0.1 * swing), 0.4 * swing);

  // teeth: falling crossings of the centre (for dir = −1, of the inverted signal), with
  // hysteresis ±h; each tooth's amplitude is its lobe before the crossing to its lobe after it
  // the sensor's leads may be swapped: then the other crossing marks the teeth. The reverse pass
  // runs only when the forward one does not give clean 3-pitch gaps.
  const fwd = detectTeeth(p, centre, h, sc, 1);
  const rev = fwd.score > 0.1 || fwd.gapIdx.length === 0 ? detectTeeth(p, centre, h, sc, -1) : null;
  const inverted = rev != null && (rev.score < fwd.score - 0.05 || (fwd.gapIdx.length === 0 && rev.gapIdx.length > 0));
  const picked = inverted && rev ? rev : fwd;
  // a toothed wheel's periods change smoothly from one tooth to the next (even while the engine
  // speeds up and slows down); crossings of noise do not
  const regular = irregularity(picked.periods, picked.gapIdx) <= 0.15;
  const none: { teeth: number[]; amps: number[]; periods: number[]; gapIdx: number[] } = { teeth: [], amps: [], periods: [], gapIdx: [] };
  const { teeth, amps, periods, gapIdx } = regular ? picked : none;
  const events: CrankEvent[] = [];

  // tooth number of each crossing, counted from the gap (1 = first after it)
  const toothNo: (number | null)[] = teeth.map(() => null);
  if (gapIdx.length) {
    for (let g = 0; g < gapIdx.length; g++) {
      const from = gapIdx[g] + 1;
      const to = g + 1 < gapIdx.length ? gapIdx[g + 1] : teeth.length - 1;
      for (let c = from; c <= to; c++) toothNo[c] = c - from + 1;
    }
    for (let c = 0; c <= gapIdx[0]; c++) toothNo[c] = TEETH_60_2 - (gapIdx[0] - c);
  }
  const normal: number[] = [];
  for (let k = 0; k < periods.length; k++) if (!gapIdx.includes(k)) normal.push(periods[k]);
  const T = median(normal);

  gapIdx.forEach((k, g) => {
    const next = gapIdx[g + 1];
    const local = median(periods.slice(Math.max(0, k - 3), k).concat(periods.slice(k + 1, k + 4)));
    events.push({
      timeS: teeth[k],
      rpm: next != null ? 60 / (teeth[next + 1] - teeth[k + 1]) : null,
      teeth: next != null ? next - k : null,
      gapRatio: local ? periods[k] / local : 0,
    });
  });

  // rpm = 1/T with T the tooth period in s (60 s/min ÷ 60 pitches per revolution): over whole
  // revolutions T is their time / 60; without one, the median tooth period
  const whole = events.filter((e) => e.rpm != null).map((e) => 60 / (e.rpm as number));
  const rpm = whole.length
    ? 1 / (whole.reduce((a, b) => a + b, 0) / whole.length / 60)
    : T != null && T > 0
      ? 1 / T
      : null;

  // damaged teeth: a small tooth among its neighbours, or a tooth missing outside the gap
  const damagedCount = new Map<number, number>();
  const mark = (no: number) => damagedCount.set(no, (damagedCount.get(no) ?? 0) + 1);
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
    if (no <= 2 || no >= TEETH_60_2 - 1) continue;
    const nb: number[] = [];
    for (let q = c - 3; q <= c + 3; q++) {
      if (q === c || q < 0 || q >= amps.length) continue;
      const nq = toothNo[q];
      if (nq != null && nq >= 2 && nq <= TEETH_60_2 - 1) nb.push(amps[q]);
    }
    const ref = median(nb);
    if (ref != null && amps[c] < DAMAGED_AMPLITUDE * ref) mark(no);
  }
  const revs = Math.max(1, gapIdx.length);
  const damagedTeeth = [...damagedCount.entries()]
    .filter(([, c]) => c * 2 >= Math.min(revs, 2) || revs === 1)
    .map(([no]) => no)
    .sort((a, b) => a - b);

  // amplitude against speed (Faraday's law: a VR sensor's output rises with speed)
  const perTooth: { amp: number; krpm: number }[] = [];
  for (let c = 1; c + 1 < teeth.length && c < amps.length; c++) {
    if (gapIdx.includes(c - 1) || gapIdx.includes(c)) continue;
    const no = toothNo[c];
    if (no != null && damagedTeeth.includes(no)) continue;
    const local = (teeth[c + 1] - teeth[c - 1]) / 2;
    if (local > 0) perTooth.push({ amp: amps[c], krpm: 1 / local / 1000 });
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
  const summary: CrankSummary = {
    eventCount: events.length,
    rpm,
    toothCount: teeth.length,
    toothPeriodMs: metricStats(normal.map((x) => x * 1e3)),
    amplitude: metricStats(amps),
    amplitudePerKrpm: ratio,
    amplitudeSlopePerKrpm: slope,
    gapRatio: metricStats(events.map((e) => e.gapRatio)),
    damagedTeeth,
  };

  // ---------- review ----------
  if (teeth.length < 10) {
    findings.push({
      code: "no-events",
      severity: "problem",
      message: "No crank teeth found: the signal does not swing about its middle often enough, or not at a regular pace.",
      advice: withSafety(
        "Probe the crank sensor's signal wire with the engine cranking or running, at a time/division that shows at least one revolution.",
        ENGINE_SAFETY,
      ),
    });
  } else if (gapIdx.length === 0) {
    findings.push({
      code: "no-gap",
      severity: "warning",
      message: `No missing-tooth gap among ${teeth.length} teeth: the capture is shorter than a revolution, or the wheel is not a 60-2.`,
      advice: withSafety("Capture at least one full revolution (60/rpm seconds).", ENGINE_SAFETY),
    });
  }
  const odd = events.filter((e) => e.teeth != null && e.teeth !== TEETH_60_2);
  if (odd.length) {
    findings.push({
      code: "tooth-count",
      severity: "warning",
      message: `${odd.map((e) => e.teeth).join(", ")} teeth counted between gaps instead of ${TEETH_60_2}: teeth are missed or extra edges are seen.`,
      advice: withSafety("Check the sensor's air gap and wiring, and the wheel for damage or debris.", ENGINE_SAFETY),
    });
  }
  if (damagedTeeth.length) {
    findings.push({
      code: "damaged-tooth",
      severity: "warning",
      message: `Tooth ${damagedTeeth.join(", ")} (counted from the gap) reads ${damagedTeeth.length > 1 ? "weak or missing" : "weak or missing"} in the sensor signal: a damaged tooth or debris on the wheel.`,
      advice: withSafety(
        "Inspect the reluctor wheel at that tooth (count from the gap in the direction of rotation) as the maker's procedure describes.",
        ENGINE_SAFETY,
      ),
    });
  }
  if (inverted && teeth.length >= 10) {
    findings.push({
      code: "inverted",
      severity: "info",
      message: "Each tooth gives a negative lobe before its positive one: the sensor's two wires are probably swapped (or the probe is).",
      advice: withSafety(
        "Check the sensor's wiring against the maker's diagram; some control units read a reversed sensor late or not at all.",
        ENGINE_SAFETY,
      ),
    });
  }
  if (T != null && T * rate < 20) {
    findings.push({
      code: "undersampled",
      severity: "warning",
      message: `Only ${Math.round(T * rate)} samples per tooth at ${fmtRate(rate)}: tooth edges and amplitudes are read coarsely.`,
      advice: withSafety(`Capture at ${fmtRate(niceCeil(40 / T))} or faster.`, ENGINE_SAFETY),
    });
  }
  const clipped = clippedFinding(p, centre, ctx.screen, s, "the tooth amplitudes");
  if (clipped) findings.push(clipped);
  const t = triggerBeyondFinding(p, s, centre * sc);
  if (t) findings.push(t);

  const suggestions: Suggestions = {
    oneEvent:
      rpm != null
        ? {
            timePerDivS: niceCeil(60 / rpm / 8),
            voltsPerDiv: summary.amplitude.max != null ? niceCeil((summary.amplitude.max / 2) * 1.25 / 4) : null,
            reason: `one revolution (60/rpm = ${fmt((60 / rpm) * 1e3, 3)} ms) with its gap across 8 of the 10 divisions (common practice, no source)`,
          }
        : null,
    allCylinders: null,
    triggerLevel: null,
  };
  return { unit, events, summary, findings, measurements, suggestions };
}
