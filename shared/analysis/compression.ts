import { ENGINE_SAFETY, withSafety } from "./findings";
import { fmt, fmtRate } from "./format";
import { measurePrepared } from "./measure";
import { clippedFinding, triggerBeyondFinding } from "./review";
import { boxcar, niceCeil, timeAtFrac, type Prepared } from "./signal";
import { histogramQuantile, metricStats } from "./stats";
import type { CaptureSettings } from "../schemas/capture-settings";
import type { CompressionEvent, CompressionSummary, Finding, Measurements, Suggestions } from "./types";

export interface CompressionContext {
  settings: Partial<CaptureSettings>;
  screen: { min: number; max: number } | null;
  cylinders?: number;
}

export interface CompressionAnalysis {
  unit: string;
  events: CompressionEvent[];
  summary: CompressionSummary;
  findings: Finding[];
  measurements: Measurements;
  suggestions: Suggestions;
}

/** A stroke below this % of the highest is suspect (common practice, no source: ~85–90 %). */
export const LOW_COMPRESSION_PCT = 85;
const DECIMATED_RATE = 2000;

/**
 * Relative compression from starter current: one current peak per compression stroke, each as a
 * % of the highest; the inrush spike at key-on is ignored; cranking rpm = 120·f_peaks/N.
 */
export function analyzeCompression(p: Prepared, ctx: CompressionContext): CompressionAnalysis {
  const s = ctx.settings;
  // raw → amperes through the clamp scale, or the file's own amperes; else the file's unit
  let unit = p.baseUnit;
  let scale = p.toBase;
  if (s.mvPerAmp && p.baseUnit === "V") {
    unit = "A";
    scale = (p.toBase * 1000) / s.mvPerAmp;
  }
  const N = Math.max(1, Math.round(ctx.cylinders ?? 4));

  // block means down to about 2 kS/s
  const blockN = Math.max(1, Math.floor(p.rate / DECIMATED_RATE));
  const m = Math.floor(p.n / blockN);
  const d = new Float32Array(m);
  for (let k = 0; k < m; k++) {
    let acc = 0;
    const o = k * blockN;
    for (let q = 0; q < blockN; q++) acc += p.v[o + q];
    d[k] = (acc / blockN) * scale;
  }
  const dRate = p.rate / blockN;
  const dTime = (x: number) => timeAtFrac(p, x * blockN + (blockN - 1) / 2);

  let lo = Infinity;
  let hi = -Infinity;
  let hiIdx = 0;
  for (let k = 0; k < m; k++) {
    if (d[k] < lo) lo = d[k];
    if (d[k] > hi) {
      hi = d[k];
      hiIdx = k;
    }
  }
  const findings: Finding[] = [];
  const measurements = measurePrepared(p, scale);
  const emptySummary = (): CompressionSummary => ({
    eventCount: 0,
    rpm: null,
    cylinders: N,
    peak: { median: null, min: null, max: null },
    relativePct: { median: null, min: null, max: null },
    positions: [],
    lowPositions: [],
    inrushIgnored: false,
  });
  const noEvents = (why: string): CompressionAnalysis => {
    findings.push({
      code: "no-events",
      severity: "problem",
      message: `No compression strokes found: ${why}.`,
      advice: withSafety(
        "Clamp round the battery's main cable (all of the starter current), crank for at least two seconds with the engine disabled as the maker directs, and start the capture before the key is turned.",
        ENGINE_SAFETY,
      ),
    });
    return { unit, events: [], summary: emptySummary(), findings, measurements, suggestions: none() };
  };
  if (m < 16 || !(hi > lo)) return noEvents("the capture is too short or flat");

  // the cranking part: from where the current flows (above 20 % of the 90th percentile)
  const q90 = histogramQuantile(d, 0.9, lo, hi);
  const q50 = histogramQuantile(d, 0.5, lo, hi);
  let start = 0;
  while (start < m && d[start] < 0.2 * q90 + 0.8 * lo) start++;
  let inrushIgnored = false;
  // the inrush: a spike near the start far above the cranking peaks
  if (hiIdx < start + 0.4 * (m - start) && hi - q50 > 2 * (q90 - q50)) {
    let k = hiIdx;
    while (k < m && d[k] > q50) k++;
    start = k;
    inrushIgnored = true;
  }
  // ... to where it stops
  let stop = m;
  while (stop > start && d[stop - 1] < 0.2 * q90 + 0.8 * lo) stop--;
  const seg = d.subarray(start, stop);
  const L = seg.length;
  if (L < 16) return noEvents("the capture ends before cranking");

  // the stroke period from the autocorrelation of the cranking current
  let mean = 0;
  for (let k = 0; k < L; k++) mean += seg[k];
  mean /= L;
  const minLag = Math.max(2, Math.floor(0.01 * dRate));
  const maxLag = Math.min(Math.floor(L / 2), Math.floor(1.2 * dRate));
  if (maxLag <= minLag + 2) return noEvents("the cranking part of the capture is too short");
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
  if (peaks.length === 0 || Math.max(...peaks.map((x) => x.r)) < 0.3) return noEvents("no repeating current peaks");
  // the strongest repeat is one stroke, or a whole cycle of N strokes when one cylinder differs
  // (a dead cylinder leaves the single-stroke repeat weak): take the shortest lag that divides it
  const strongest = peaks.reduce((x, y) => (y.r > x.r ? y : x));
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
  const P = lag + (den !== 0 ? (0.5 * (r[lag - 1] - r[lag + 1])) / den : 0); // in decimated samples

  // one peak per stroke
  const sm = boxcar(seg, 0, L, Math.max(1, Math.round(P / 10) | 1));
  const peakIdx: number[] = [];
  const step = Math.max(2, Math.round(P));
  let a = 0;
  let b = Math.min(L, step);
  while (b - a >= 2) {
    let best2 = a;
    for (let k = a; k < b; k++) if (sm[k] > sm[best2]) best2 = k;
    if (best2 === a && peakIdx.length === 0) {
      // the window starts on a falling slope: move on to the next trough
      while (a + 1 < L && sm[a + 1] <= sm[a]) a++;
      a++;
      b = Math.min(L, a + step);
      continue;
    }
    if (best2 === b - 1) {
      if (b >= L) break; // the capture ends on a rising slope: not a complete stroke
      a = best2; // still rising at the window's end: look further
      b = Math.min(L, a + step);
      continue;
    }
    peakIdx.push(best2);
    a = best2 + Math.round(0.5 * P);
    b = Math.min(L, best2 + Math.round(1.5 * P));
  }
  // a stroke riding on the inrush's tail reads high: leave out the first one after it
  if (inrushIgnored && peakIdx.length > 0 && peakIdx[0] < P) peakIdx.shift();
  if (peakIdx.length < 2) return noEvents("fewer than two current peaks");
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
  const hMax = Math.max(...heights);
  const times = peakIdx.map((pk) => {
    const y0 = sm[pk - 1] ?? sm[pk];
    const y1 = sm[pk];
    const y2 = sm[pk + 1] ?? sm[pk];
    const dd = y0 - 2 * y1 + y2;
    const off = dd !== 0 ? (0.5 * (y0 - y2)) / dd : 0;
    return dTime(start + pk + Math.max(-0.5, Math.min(0.5, off)));
  });
  // a stroke with (almost) no hump has no peak to time: it sits midway between its neighbours
  const medH = [...heights].sort((x, y) => x - y)[heights.length >> 1];
  for (let k = 0; k < times.length; k++) {
    if (heights[k] >= 0.3 * medH) continue;
    const Ps = P / dRate;
    if (k > 0 && k + 1 < times.length) times[k] = (times[k - 1] + times[k + 1]) / 2;
    else if (k > 0) times[k] = times[k - 1] + Ps;
    else if (k + 1 < times.length) times[k] = times[k + 1] - Ps;
  }
  const events: CompressionEvent[] = peakIdx.map((_, k) => ({
    timeS: times[k],
    peak: heights[k],
    relativePct: hMax > 0 ? (100 * heights[k]) / hMax : 0,
    position: (k % N) + 1,
  }));
  const span = times[times.length - 1] - times[0];
  const fPeaks = span > 0 ? (times.length - 1) / span : null;
  const rpm = fPeaks != null ? (120 * fPeaks) / N : null;

  const positions: { position: number; relativePct: number }[] = [];
  for (let q = 1; q <= Math.min(N, events.length); q++) {
    const xs = events.filter((e) => e.position === q).map((e) => e.relativePct);
    positions.push({ position: q, relativePct: xs.reduce((x, y) => x + y, 0) / xs.length });
  }
  const lowPositions = positions.filter((x) => x.relativePct < LOW_COMPRESSION_PCT).map((x) => x.position);

  const summary: CompressionSummary = {
    eventCount: events.length,
    rpm,
    cylinders: N,
    peak: metricStats(heights),
    relativePct: metricStats(events.map((e) => e.relativePct)),
    positions,
    lowPositions,
    inrushIgnored,
  };

  // ---------- review ----------
  if (ctx.cylinders == null) {
    findings.push({
      code: "cylinders-assumed",
      severity: "info",
      message: `The number of cylinders was not given; ${N} was assumed for the cranking rpm and the positions.`,
      advice: "Enter the engine's number of cylinders in the capture settings.",
    });
  }
  const clipped = clippedFinding(p, q50 / scale, ctx.screen, s, "the current peaks");
  if (clipped) findings.push(clipped);
  const samplesPerStroke = P * blockN;
  if (samplesPerStroke < 20) {
    findings.push({
      code: "undersampled",
      severity: "warning",
      message: `Only ${Math.round(samplesPerStroke)} samples per compression stroke at ${fmtRate(p.rate)}; the peaks are read coarsely.`,
      advice: withSafety("Capture at 1 kS/s or faster.", ENGINE_SAFETY),
    });
  }
  for (const q of lowPositions) {
    const pct = positions[q - 1].relativePct;
    findings.push({
      code: "low-compression",
      severity: "warning",
      message: `Compression stroke ${q} of every ${N} draws ${Math.round(pct)} % of the highest current peak (below ${LOW_COMPRESSION_PCT} %): that cylinder is suspect.`,
      advice: withSafety(
        `Confirm with a compression or leak-down test on that cylinder. To know which cylinder stroke ${q} is, capture cylinder 1's ignition on a second channel and count along the firing order.`,
        ENGINE_SAFETY,
      ),
    });
  }
  if (rpm != null && rpm < 150) {
    findings.push({
      code: "slow-cranking",
      severity: "warning",
      message: `Cranking at ${Math.round(rpm)} rpm, below the usual 150–250 rpm.`,
      advice: withSafety("Check the battery's charge, the cables and the starter before judging compression.", ENGINE_SAFETY),
    });
  }
  const t = triggerBeyondFinding(p, s, null);
  if (t) findings.push(t);

  const suggestions: Suggestions = {
    oneEvent: null,
    allCylinders:
      rpm != null
        ? {
            timePerDivS: niceCeil((2 * 120) / rpm / 10),
            voltsPerDiv: null,
            reason: `two engine cycles (2 × 120/rpm = ${fmt((240 / rpm) * 1e3, 3)} ms at ${Math.round(rpm)} rpm) across the 10 divisions, after the inrush (common practice, no source)`,
          }
        : null,
    triggerLevel: null,
  };
  return { unit, events, summary, findings, measurements, suggestions };

  function none(): Suggestions {
    return { oneEvent: null, allCylinders: null, triggerLevel: null };
  }
}
