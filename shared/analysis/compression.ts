/**
 * Relative compression from starter current: one current peak per compression stroke, each as a %
 * of the highest; cranking rpm = 120·f_peaks/N (trade reference). Stages: decimate → the cranking
 * part, with the starter's inrush taken off → the stroke period → one peak per stroke → heights and
 * times → review.
 *
 * The inrush: at key-on the motor at standstill draws far more than while turning, and the current
 * falls back towards the cranking level as the motor speeds up (its back-EMF rises). The fall is
 * modelled as an exponential over the cranking level, fitted on its own decay before the first
 * stroke rises, and taken off; so the first compression stroke is kept and read at its own height
 * whether it comes late after the inrush (slow cranking) or while the inrush still decays (fast).
 */
import type { CaptureSettings } from "../schemas/capture-settings";
import { detectClipping } from "./clip";
import { inrushTail, periodicTail, type InrushTail } from "./compression-inrush";
import { ENGINE_SAFETY } from "./findings";
import { fmt, fmtRate, fmtTime } from "./format";
import { measurePrepared } from "./measure";
import { clippedFinding, finishFindings, triggerBeyondFinding, type FindingDraft } from "./review";
import { boxcar, niceCeil, timeAtFrac, type Prepared } from "./signal";
import { histogramQuantile, metricStats, robustLevelAndNoise } from "./stats";
import type { CompressionEvent, CompressionSummary, Finding, Measurements, Suggestions } from "./types";

export interface CompressionContext {
  settings: Partial<CaptureSettings>;
  screen: { min: number; max: number } | null;
  cylinders?: number;
}

export interface CompressionAnalysis {
  events: CompressionEvent[];
  summary: CompressionSummary;
  findings: Finding[];
  measurements: Measurements;
  suggestions: Suggestions;
}

/** A stroke below this % of the highest is suspect (common practice, no source: ~85–90 %). */
export const LOW_COMPRESSION_PCT = 85;
const DECIMATED_RATE = 2000;

interface Decimated {
  /** block means, physical unit */
  d: Float32Array;
  m: number;
  rate: number;
  blockN: number;
  lo: number;
  hi: number;
  hiIdx: number;
}

function decimate(p: Prepared): Decimated {
  const blockN = Math.max(1, Math.floor(p.rate / DECIMATED_RATE));
  const m = Math.floor(p.n / blockN);
  const d = new Float32Array(m);
  let lo = Infinity;
  let hi = -Infinity;
  let hiIdx = 0;
  for (let k = 0; k < m; k++) {
    let acc = 0;
    const o = k * blockN;
    for (let q = 0; q < blockN; q++) acc += p.v[o + q];
    d[k] = (acc / blockN) * p.toPhysical;
    if (d[k] < lo) lo = d[k];
    if (d[k] > hi) {
      hi = d[k];
      hiIdx = k;
    }
  }
  return { d, m, rate: p.rate / blockN, blockN, lo, hi, hiIdx };
}

interface Cranking {
  /** the cranking current with the inrush's tail taken off, from `start` to `stop` */
  seg: Float32Array;
  /** the tail taken off, by index in `seg` (0 when none), and its height at the inrush's peak */
  tail: ((k: number) => number) | null;
  tailHeight: number;
  start: number;
  inrushIgnored: boolean;
  q50: number;
}

/**
 * The cranking part of the capture, with the inrush's tail taken off: estimated from the inrush's
 * early decay, or, once the stroke period P (decimated samples) is known, from the one-period
 * average (compression-inrush.ts).
 */
function crankingPart(dc: Decimated, P?: number): Cranking | null {
  const { d, m, lo, hi, hiIdx } = dc;
  const q90 = histogramQuantile(d, 0.9, lo, hi);
  const q50 = histogramQuantile(d, 0.5, lo, hi);
  // from where the current flows (above 20 % of the 90th percentile) to where it stops
  const flowing = 0.2 * q90 + 0.8 * lo;
  let start = 0;
  while (start < m && d[start] < flowing) start++;
  let stop = m;
  while (stop > start && d[stop - 1] < flowing) stop--;
  let x = d;
  let inrushIgnored = false;
  let tail: InrushTail | null = null;
  // the inrush: a spike near the start far above the cranking peaks (those of the capture's second
  // half: a slow inrush can fill much of the first)
  const late = d.subarray(Math.min(stop - 1, start + Math.floor((stop - start) / 2)), stop);
  const lateQ50 = late.length ? histogramQuantile(late, 0.5, lo, hi) : q50;
  const lateQ90 = late.length ? histogramQuantile(late, 0.9, lo, hi) : q90;
  if (hiIdx < start + 0.4 * (m - start) && hi - lateQ50 > 2 * Math.min(q90 - q50, lateQ90 - lateQ50)) {
    inrushIgnored = true;
    const later = d.subarray(Math.min(stop - 1, hiIdx + Math.floor((stop - hiIdx) / 3)), stop);
    const base = later.length ? histogramQuantile(later, 0.1, lo, hi) : q50;
    tail = (P != null ? periodicTail(d, hiIdx, stop, P) : null) ?? inrushTail(boxcar(d, 0, m, 5), hiIdx, base, dc.rate);
    if (tail) {
      const t = tail.at;
      x = Float32Array.from(d, (y, k) => y - t(k));
      start = hiIdx + 1;
      while (start < stop && x[start] > base + 0.5 * (q50 - base) && x[start] > x[start + 1]) start++;
    } else {
      // no clean decay: start after the inrush has fallen to the median current
      let k = hiIdx;
      while (k < m && d[k] > q50) k++;
      start = k;
    }
  }
  if (stop - start < 16) return null;
  const t = tail?.at;
  return {
    seg: x.subarray(start, stop),
    tail: t ? (k: number) => t(k + start) : null,
    tailHeight: tail?.height ?? 0,
    start,
    inrushIgnored,
    q50,
  };
}

/** The stroke period (decimated samples) from the autocorrelation of the cranking current, or null. */
function strokePeriod(seg: Float32Array, rate: number, N: number): number | null {
  const L = seg.length;
  let mean = 0;
  for (let k = 0; k < L; k++) mean += seg[k];
  mean /= L;
  const minLag = Math.max(2, Math.floor(0.01 * rate));
  const maxLag = Math.min(Math.floor(L / 2), Math.floor(1.2 * rate));
  if (maxLag <= minLag + 2) return null;
  const r = new Float64Array(maxLag + 2);
  let r0 = 0;
  for (let k = 0; k < L; k++) r0 += (seg[k] - mean) ** 2;
  for (let lg = minLag - 1; lg <= maxLag + 1; lg++) {
    let acc = 0;
    for (let k = 0; k + lg < L; k++) acc += (seg[k] - mean) * (seg[k + lg] - mean);
    r[lg] = r0 > 0 ? acc / r0 / ((L - lg) / L) : 0;
  }
  const peaks: { lag: number; r: number }[] = [];
  for (let lg = minLag; lg <= maxLag; lg++) {
    if (r[lg] > r[lg - 1] && r[lg] >= r[lg + 1] && r[lg] > 0.15) peaks.push({ lag: lg, r: r[lg] });
  }
  if (peaks.length === 0 || Math.max(...peaks.map((x) => x.r)) < 0.3) return null;
  // the shortest strong repeat is one stroke, or a whole cycle of N strokes when one cylinder
  // differs (a dead cylinder leaves the single-stroke repeat weak): take the shortest lag dividing it
  const rMax = Math.max(...peaks.map((x) => x.r));
  const strongest = peaks.find((x) => x.r >= 0.8 * rMax)!;
  let lag = strongest.lag;
  for (let k = N; k >= 2; k--) {
    const want = strongest.lag / k;
    const near = peaks.filter((x) => Math.abs(x.lag - want) <= 0.1 * want && x.r > 0.15);
    if (near.length) {
      lag = near.reduce((x, y) => (y.r > x.r ? y : x)).lag;
      break;
    }
  }
  const den = r[lag - 1] - 2 * r[lag] + r[lag + 1];
  return lag + (den !== 0 ? (0.5 * (r[lag - 1] - r[lag + 1])) / den : 0);
}

/** The first local maximum in [a, b) standing `drop` above the lowest points half a stroke either side. */
function fallingPeak(sm: Float32Array, a: number, b: number, P: number, drop: number): number {
  const half = Math.round(0.5 * P);
  for (let k = a + 1; k < b - 1; k++) {
    if (!(sm[k] >= sm[k - 1] && sm[k] > sm[k + 1])) continue;
    let after = sm[k];
    for (let q = k; q < Math.min(sm.length, k + half); q++) if (sm[q] < after) after = sm[q];
    let before = sm[k];
    for (let q = Math.max(0, k - half); q <= k; q++) if (sm[q] < before) before = sm[q];
    if (sm[k] - after >= drop && sm[k] - before >= drop) return k;
  }
  return -1;
}

/** One peak per stroke: the highest point of each stroke-long window, walking stroke by stroke. */
function strokePeaks(sm: Float32Array, P: number): number[] {
  const L = sm.length;
  const peakIdx: number[] = [];
  // a third of the usual stroke's swing: a fall that marks a stroke's peak
  const sorted = Float32Array.from(sm).sort();
  const drop = (sorted[Math.floor(0.9 * (L - 1))] - sorted[Math.floor(0.1 * (L - 1))]) / 3;
  const step = Math.max(2, Math.round(P));
  let a = 0;
  let b = Math.min(L, step);
  while (b - a >= 2) {
    // the capture's end cuts this window: a stroke needs its peak and its fall after it (a third of
    // a period) inside the capture
    if (b >= L && peakIdx.length && L - peakIdx[peakIdx.length - 1] < 1.3 * P) break;
    let best = a;
    for (let k = a; k < b; k++) if (sm[k] > sm[best]) best = k;
    if (best === a && peakIdx.length === 0) {
      // the window starts on a falling slope: move on to the next trough
      while (a + 1 < L && sm[a + 1] <= sm[a]) a++;
      a++;
      b = Math.min(L, a + step);
      continue;
    }
    if (best === b - 1) {
      // the next stroke already rises, higher, at the window's end: a stroke inside it comes first
      const inner = fallingPeak(sm, a, b, P, drop);
      if (inner >= 0) {
        peakIdx.push(inner);
        a = inner + Math.round(0.5 * P);
        b = Math.min(L, inner + Math.round(1.5 * P));
        continue;
      }
      if (b >= L) break; // the capture ends on a rising slope: not a complete stroke
      a = best; // still rising at the window's end: look further
      b = Math.min(L, a + step);
      continue;
    }
    peakIdx.push(best);
    a = best + Math.round(0.5 * P);
    b = Math.min(L, best + Math.round(1.5 * P));
  }
  return peakIdx;
}

/**
 * The troughs between strokes all sit at the cranking current once the inrush's tail is right. What
 * the fitted tail left behind shows in the early troughs; it is modelled as a change of the tail's
 * height and of its time constant (c1·g + c2·k·g, g the tail, to first order) by least squares over
 * the troughs, and taken off too.
 */
function correctTailResidue(sm: Float32Array, peakIdx: number[], cr: Cranking): Float32Array {
  const tail = cr.tail;
  if (!tail || peakIdx.length < 3) return sm;
  const tr: { k: number; y: number; g: number }[] = [];
  for (let i = 1; i < peakIdx.length; i++) {
    let lo = peakIdx[i - 1];
    for (let q = peakIdx[i - 1]; q <= peakIdx[i]; q++) if (sm[q] < sm[lo]) lo = q;
    tr.push({ k: lo, y: sm[lo], g: tail(lo) });
  }
  const settled = tr.filter((x) => x.g < 0.02 * cr.tailHeight).map((x) => x.y);
  const early = tr.filter((x) => x.g >= 0.02 * cr.tailHeight);
  if (!settled.length || !early.length) return sm;
  const level = settled.sort((a, b) => a - b)[settled.length >> 1];
  let c1 = 0;
  let c2 = 0;
  const r = early.map((x) => x.y - level);
  if (early.length >= 3) {
    // two unknowns: the normal equations of r ≈ c1·g + c2·k·g
    let a11 = 0,
      a12 = 0,
      a22 = 0,
      b1 = 0,
      b2 = 0;
    early.forEach((x, i) => {
      const u = x.g;
      const v = x.k * x.g;
      a11 += u * u;
      a12 += u * v;
      a22 += v * v;
      b1 += u * r[i];
      b2 += v * r[i];
    });
    const det = a11 * a22 - a12 * a12;
    if (Math.abs(det) > 0) {
      c1 = (b1 * a22 - b2 * a12) / det;
      c2 = (a11 * b2 - a12 * b1) / det;
    }
  } else {
    let num = 0;
    let den = 0;
    early.forEach((x, i) => {
      num += x.g * r[i];
      den += x.g * x.g;
    });
    c1 = den > 0 ? num / den : 0;
  }
  return Float32Array.from(sm, (y, k) => y - (c1 + c2 * k) * tail(k));
}

/** Each stroke's rise above the troughs beside it, and its time (s). */
function strokeHeightsAndTimes(
  sm: Float32Array,
  peakIdx: number[],
  P: number,
  time: (x: number) => number,
  rate: number,
) {
  const troughs: number[] = [];
  for (let k = 1; k < peakIdx.length; k++) {
    let mn = Infinity;
    for (let q = peakIdx[k - 1]; q <= peakIdx[k]; q++) if (sm[q] < mn) mn = sm[q];
    troughs.push(mn);
  }
  const heights = peakIdx.map((pk, k) => {
    const before = k > 0 ? troughs[k - 1] : null;
    const after = k < troughs.length ? troughs[k] : null;
    const ref = before != null && after != null ? (before + after) / 2 : (before ?? after)!;
    return sm[pk] - ref;
  });
  const times = peakIdx.map((pk) => {
    const y0 = sm[pk - 1] ?? sm[pk];
    const y1 = sm[pk];
    const y2 = sm[pk + 1] ?? sm[pk];
    const dd = y0 - 2 * y1 + y2;
    const off = dd !== 0 ? (0.5 * (y0 - y2)) / dd : 0;
    return time(pk + Math.max(-0.5, Math.min(0.5, off)));
  });
  // a stroke with (almost) no hump has no peak to time: it sits midway between its neighbours
  const medH = [...heights].sort((x, y) => x - y)[heights.length >> 1];
  const Ps = P / rate;
  for (let k = 0; k < times.length; k++) {
    if (heights[k] >= 0.3 * medH) continue;
    if (k > 0 && k + 1 < times.length) times[k] = (times[k - 1] + times[k + 1]) / 2;
    else if (k > 0) times[k] = times[k - 1] + Ps;
    else if (k + 1 < times.length) times[k] = times[k + 1] - Ps;
  }
  return { heights, times };
}

function summaryOf(
  events: CompressionEvent[],
  heights: number[],
  N: number,
  inrushIgnored: boolean,
): CompressionSummary {
  const times = events.map((e) => e.timeS);
  const span = times.length ? times[times.length - 1] - times[0] : 0;
  const fPeaks = span > 0 ? (times.length - 1) / span : null;
  const positions: { position: number; relativePct: number }[] = [];
  for (let q = 1; q <= Math.min(N, events.length); q++) {
    const all = events.filter((e) => e.position === q);
    const settled = all.filter((e) => !e.onInrush);
    const xs = (settled.length ? settled : all).map((e) => e.relativePct);
    positions.push({ position: q, relativePct: xs.reduce((x, y) => x + y, 0) / xs.length });
  }
  return {
    eventCount: events.length,
    rpm: fPeaks != null ? (120 * fPeaks) / N : null,
    cylinders: N,
    peak: metricStats(heights),
    relativePct: metricStats(events.filter((e) => !e.onInrush).map((e) => e.relativePct)),
    positions,
    lowPositions: positions.filter((x) => x.relativePct < LOW_COMPRESSION_PCT).map((x) => x.position),
    inrushIgnored,
  };
}

export function analyzeCompression(p: Prepared, ctx: CompressionContext): CompressionAnalysis {
  const N = Math.max(1, Math.round(ctx.cylinders ?? 4));
  const dc = decimate(p);
  const measurements = measurePrepared(p, p.toPhysical);
  const drafts: FindingDraft[] = [];
  const noEvents = (why: string): CompressionAnalysis => {
    drafts.push({
      code: "no-events",
      severity: "problem",
      message: `No compression strokes found: ${why}.`,
      advice:
        "Clamp round the battery's main cable (all of the starter current), crank for at least two seconds with " +
        "the engine disabled as the maker directs, and start the capture before the key is turned.",
      caution: true,
    });
    const empty = summaryOf([], [], N, false);
    const none: Suggestions = { oneEvent: null, allCylinders: null, triggerLevel: null, triggerText: null };
    return {
      events: [],
      summary: empty,
      findings: finishFindings(drafts, ENGINE_SAFETY),
      measurements,
      suggestions: none,
    };
  };
  if (dc.m < 16 || !(dc.hi > dc.lo)) return noEvents("the capture is too short or flat");
  let cr = crankingPart(dc);
  if (!cr) return noEvents("the capture ends before cranking");
  let P = strokePeriod(cr.seg, dc.rate, N);
  if (P == null) return noEvents("no repeating current peaks");
  if (cr.inrushIgnored) {
    // the stroke period known, the tail again from the one-period average (compression-inrush.ts)
    const again = crankingPart(dc, P);
    const P2 = again ? strokePeriod(again.seg, dc.rate, N) : null;
    if (again && P2 != null) [cr, P] = [again, P2];
  }
  // light smoothing: enough against the noise, little enough not to flatten a stroke's sharp fall
  const sm = boxcar(cr.seg, 0, cr.seg.length, Math.max(1, Math.round(P / 25) | 1));
  const peakIdx = strokePeaks(sm, P);
  if (peakIdx.length < 2) return noEvents("fewer than two current peaks");
  const time = (x: number) => timeAtFrac(p, (cr.start + x) * dc.blockN + (dc.blockN - 1) / 2);
  const { heights, times } = strokeHeightsAndTimes(correctTailResidue(sm, peakIdx, cr), peakIdx, P, time, dc.rate);
  // a stroke that comes while much of the inrush is left (over a quarter of a typical stroke's rise)
  // is timed and counted, but its height rests on the tail's model: it does not judge compression
  const typical = [...heights].sort((a, b) => a - b)[heights.length >> 1];
  const onInrush = peakIdx.map((pk) => (cr.tail ? cr.tail(pk) > 0.25 * typical : false));
  const judged = heights.filter((_, k) => !onInrush[k]);
  const hMax = Math.max(...(judged.length ? judged : heights));
  const events: CompressionEvent[] = peakIdx.map((_, k) => ({
    timeS: times[k],
    peak: heights[k],
    relativePct: hMax > 0 ? (100 * heights[k]) / hMax : 0,
    position: (k % N) + 1,
    onInrush: onInrush[k],
  }));
  const summary = summaryOf(events, heights, N, cr.inrushIgnored);
  reviewCompression(p, ctx, summary, P * dc.blockN, cr.q50 / p.toPhysical, drafts);
  const rpm = summary.rpm;
  const tpd = rpm != null ? niceCeil((2 * 120) / rpm / 10) : null;
  const suggestions: Suggestions = {
    oneEvent: null,
    allCylinders:
      rpm != null && tpd != null
        ? {
            timePerDivS: tpd,
            voltsPerDiv: null,
            reason:
              `two engine cycles (2 × 120/rpm = ${fmt((240 / rpm) * 1e3, 3)} ms at ${Math.round(rpm)} rpm) ` +
              `across the 10 divisions, after the inrush (common practice, no source)`,
            text: `${fmtTime(tpd)}/div`,
          }
        : null,
    triggerLevel: null,
    triggerText: null,
  };
  return { events, summary, findings: finishFindings(drafts, ENGINE_SAFETY), measurements, suggestions };
}

function reviewCompression(
  p: Prepared,
  ctx: CompressionContext,
  summary: CompressionSummary,
  samplesPerStroke: number,
  restingStored: number,
  drafts: FindingDraft[],
): void {
  const { positions, lowPositions, rpm, cylinders: N } = summary;
  if (ctx.cylinders == null) {
    drafts.push({
      code: "cylinders-assumed",
      severity: "info",
      message: `The number of cylinders was not given; ${N} was assumed for the cranking rpm and the positions.`,
      advice: "Enter the engine's number of cylinders in the capture settings.",
    });
  }
  const noise = p.n ? robustLevelAndNoise(p.v).noise : 0;
  const clipped = clippedFinding(
    p,
    detectClipping(p, restingStored, ctx.screen, noise),
    ctx.settings,
    "the current peaks",
  );
  if (clipped) drafts.push(clipped);
  if (samplesPerStroke < 20) {
    drafts.push({
      code: "undersampled",
      severity: "warning",
      message: `Only ${Math.round(samplesPerStroke)} samples per compression stroke at ${fmtRate(p.rate)}; the peaks are read coarsely.`,
      advice: "Capture at 1 kS/s or faster.",
      caution: true,
    });
  }
  for (const q of lowPositions) {
    const pct = positions[q - 1].relativePct;
    drafts.push({
      code: "low-compression",
      severity: "warning",
      message: `Compression stroke ${q} of every ${N} draws ${Math.round(pct)} % of the highest current peak (below ${LOW_COMPRESSION_PCT} %): that cylinder is suspect.`,
      advice:
        `Confirm with a compression or leak-down test on that cylinder. To know which cylinder stroke ${q} ` +
        `is, capture cylinder 1's ignition on a second channel and count along the firing order.`,
      caution: true,
    });
  }
  if (rpm != null && rpm < 150) {
    drafts.push({
      code: "slow-cranking",
      severity: "warning",
      message: `Cranking at ${Math.round(rpm)} rpm, below the usual 150–250 rpm.`,
      advice: "Check the battery's charge, the cables and the starter before judging compression.",
      caution: true,
    });
  }
  const t = triggerBeyondFinding(p, ctx.settings, null);
  if (t) drafts.push(t);
}
