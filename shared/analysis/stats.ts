/**
 * Small, allocation-light statistics used by the waveform analysis. Pure: runs in the browser too.
 */

import type { MetricStats } from "./types";

export type NumArray = ArrayLike<number>;

/** Median of a plain list (copies and sorts; for short lists such as per-event metrics). */
export function median(values: readonly number[]): number | null {
  const xs = values.filter((v) => Number.isFinite(v)).sort((a, b) => a - b);
  const n = xs.length;
  if (n === 0) return null;
  const h = n >> 1;
  return n % 2 ? xs[h] : (xs[h - 1] + xs[h]) / 2;
}

/** Median absolute deviation from the median (unscaled). */
export function medianAbsoluteDeviation(values: readonly number[]): number | null {
  const m = median(values);
  if (m == null) return null;
  return median(values.filter((v) => Number.isFinite(v)).map((v) => Math.abs(v - m)));
}

export type { MetricStats } from "./types";

/** Median, min and max of the finite values; all null when there are none. */
export function metricStats(values: readonly (number | null | undefined)[]): MetricStats {
  const xs = values.filter((v): v is number => typeof v === "number" && Number.isFinite(v));
  if (xs.length === 0) return { median: null, min: null, max: null };
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of xs) {
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  return { median: median(xs), min: lo, max: hi };
}

/**
 * Quantile q (0..1) of values[start, end) by a two-level histogram: exact to about 1/16,000,000
 * of the range, two passes per level, no sorting and no copy of the data. `lo`/`hi` must bound the
 * values (pass the min and max when known).
 */
export function histogramQuantile(
  values: NumArray,
  q: number,
  lo: number,
  hi: number,
  start = 0,
  end = values.length,
): number {
  const n = end - start;
  if (n <= 0) return NaN;
  if (!(hi > lo)) return lo;
  const BINS = 4096;
  const counts = new Uint32Array(BINS);
  const target = Math.min(n - 1, Math.max(0, Math.floor(q * (n - 1))));
  let l = lo;
  let h = hi;
  let includeTop = true; // the window's top edge belongs to it (true for the last bin only)
  for (let level = 0; level < 2; level++) {
    counts.fill(0);
    const scale = BINS / (h - l);
    let below = 0;
    for (let i = start; i < end; i++) {
      const v = values[i];
      if (v < l) {
        below++;
        continue;
      }
      if (v >= h) {
        if (v === h && includeTop) counts[BINS - 1]++;
        continue;
      }
      const b = ((v - l) * scale) | 0; // 0 <= (v - l) * scale < BINS here, so no overflow
      counts[b < BINS ? b : BINS - 1]++;
    }
    let acc = below;
    let bin = BINS - 1;
    for (let b = 0; b < BINS; b++) {
      if (acc + counts[b] > target) {
        bin = b;
        break;
      }
      acc += counts[b];
    }
    const width = (h - l) / BINS;
    includeTop = includeTop && bin === BINS - 1;
    const nl = l + bin * width;
    h = bin === BINS - 1 ? h : nl + width;
    l = nl;
  }
  return (l + h) / 2;
}

/** Median of values[start, end) (histogram method, see histogramQuantile). */
export function fastMedian(
  values: NumArray,
  start = 0,
  end = values.length,
  bounds?: { min: number; max: number },
): number {
  let lo = Infinity;
  let hi = -Infinity;
  if (bounds) {
    lo = bounds.min;
    hi = bounds.max;
  } else {
    for (let i = start; i < end; i++) {
      const v = values[i];
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
  }
  return histogramQuantile(values, 0.5, lo, hi, start, end);
}

/** Samples taken by robustLevelAndNoise from a long signal (evenly spread blocks). */
export const ROBUST_SAMPLE_MAX = 1 << 16;
const ROBUST_BLOCK = 4096;

/**
 * Evenly spread contiguous blocks of a long signal (at most `max` samples), for level and quantile
 * estimates that need not read every sample; a short signal is returned as it is (no copy).
 */
export function blockSample(values: Float32Array, max = ROBUST_SAMPLE_MAX): Float32Array {
  const n = values.length;
  if (n <= max) return values;
  const blocks = Math.floor(max / ROBUST_BLOCK);
  const out = new Float32Array(blocks * ROBUST_BLOCK);
  const stride = (n - ROBUST_BLOCK) / (blocks - 1);
  for (let b = 0; b < blocks; b++) {
    const from = Math.floor(b * stride);
    out.set(values.subarray(from, from + ROBUST_BLOCK), b * ROBUST_BLOCK);
  }
  return out;
}

/** Quantile q of a (block-sampled) signal: see blockSample and histogramQuantile. */
export function sampledQuantile(values: Float32Array, q: number, min: number, max: number): number {
  return histogramQuantile(blockSample(values), q, min, max);
}

/**
 * Median level and noise RMS (see noiseRms) of values[start, end). Long signals are read in
 * evenly spread contiguous blocks (at most ROBUST_SAMPLE_MAX samples in all), which leaves both
 * robust estimates unchanged for a steady baseline and keeps the cost flat.
 */
export function robustLevelAndNoise(
  values: Float32Array,
  start = 0,
  end = values.length,
): { median: number; noise: number } {
  const n = end - start;
  if (n <= 0) return { median: NaN, noise: 0 };
  let blocks: number;
  let size: number;
  if (n <= ROBUST_SAMPLE_MAX) {
    blocks = 1;
    size = n;
  } else {
    size = ROBUST_BLOCK;
    blocks = Math.floor(ROBUST_SAMPLE_MAX / ROBUST_BLOCK);
  }
  const total = blocks * size;
  const sample = blocks === 1 ? values.subarray(start, end) : new Float32Array(total);
  const diffs = new Float32Array(Math.max(1, total - blocks));
  let lo = Infinity;
  let hi = -Infinity;
  let dmax = 0;
  let m = 0;
  const stride = blocks > 1 ? (n - size) / (blocks - 1) : 0;
  for (let b = 0; b < blocks; b++) {
    const from = start + Math.floor(b * stride);
    const off = b * size;
    let prev = values[from];
    for (let k = 0; k < size; k++) {
      const x = values[from + k];
      if (blocks > 1) sample[off + k] = x;
      if (x < lo) lo = x;
      if (x > hi) hi = x;
      if (k > 0) {
        const d = x > prev ? x - prev : prev - x;
        diffs[m++] = d;
        if (d > dmax) dmax = d;
      }
      prev = x;
    }
  }
  const median = histogramQuantile(sample, 0.5, lo, hi, 0, total);
  const noise = m >= 2 ? (1.4826 * histogramQuantile(diffs, 0.5, 0, dmax, 0, m)) / Math.SQRT2 : 0;
  return { median, noise };
}

/**
 * Robust noise RMS of a sampled signal from its first differences: for white noise of RMS σ the
 * differences have RMS σ·√2, and 1.4826·MAD estimates the RMS of a normal distribution
 * (the consistency constant of the MAD, 1/Φ⁻¹(3/4)). The slowly varying signal barely moves
 * the median of |Δ|, so this reads the noise even under a waveform.
 */
export function noiseRms(values: NumArray, start = 0, end = values.length, scratch?: Float32Array): number {
  const n = end - start - 1;
  if (n < 2) return 0;
  const d = scratch && scratch.length >= n ? scratch : new Float32Array(n);
  let hi = 0;
  for (let i = 0; i < n; i++) {
    const v = Math.abs(values[start + i + 1] - values[start + i]);
    d[i] = v;
    if (v > hi) hi = v;
  }
  const med = histogramQuantile(d, 0.5, 0, hi, 0, n);
  return (1.4826 * med) / Math.SQRT2;
}

/** Least-squares slope of y against x. */
export function linearSlope(xs: readonly number[] | Float64Array, ys: readonly number[] | Float64Array): number | null {
  const n = Math.min(xs.length, ys.length);
  if (n < 2) return null;
  let sx = 0;
  let sy = 0;
  for (let i = 0; i < n; i++) {
    sx += xs[i];
    sy += ys[i];
  }
  const mx = sx / n;
  const my = sy / n;
  let sxy = 0;
  let sxx = 0;
  for (let i = 0; i < n; i++) {
    sxy += (xs[i] - mx) * (ys[i] - my);
    sxx += (xs[i] - mx) * (xs[i] - mx);
  }
  return sxx > 0 ? sxy / sxx : null;
}

export interface ModifiedZOptions {
  /** |M| above this is an outlier (Iglewicz & Hoaglin recommend 3.5) */
  threshold?: number;
  /** an outlier must also differ from the median by at least this fraction of |median| */
  minRelativeDifference?: number;
  /** the smallest difference that can matter at all (e.g. 1 for whole counts) */
  resolution?: number;
}

export interface ModifiedZResult {
  median: number;
  mad: number;
  /** the spread actually used as MAD (guarded against 0 and tiny spreads) */
  madUsed: number;
  scores: number[];
  outlier: boolean[];
}

/**
 * Modified z-score of Iglewicz and Hoaglin ("How to Detect and Handle Outliers", ASQC Basic
 * References in Quality Control vol. 16, 1993): M = 0.6745·(x − median)/MAD, |M| > 3.5 flagged.
 * 0.6745 is Φ⁻¹(3/4), so M is on the scale of a standard z-score for normal data.
 *
 * Guards, so that healthy sets never flag noise: MAD is floored at 2 % of |median| and at half the
 * metric's resolution (MAD = 0 when most values are equal would otherwise make every small
 * difference infinite), and an outlier must also differ from the median by a difference that
 * matters: at least `minRelativeDifference` of |median| (default 10 %) and at least `resolution`.
 * Fewer than three values never give an outlier.
 */
export function modifiedZScores(values: readonly number[], opts: ModifiedZOptions = {}): ModifiedZResult | null {
  const threshold = opts.threshold ?? 3.5;
  const minRel = opts.minRelativeDifference ?? 0.1;
  const resolution = opts.resolution ?? 0;
  const med = median(values);
  if (med == null) return null;
  const mad = median(values.map((v) => Math.abs(v - med))) ?? 0;
  const madUsed = Math.max(mad, 0.02 * Math.abs(med), resolution / 2, Number.MIN_VALUE);
  const scores = values.map((v) => (0.6745 * (v - med)) / madUsed);
  const outlier = values.map((v, i) => {
    if (values.length < 3) return false;
    const diff = Math.abs(v - med);
    return Math.abs(scores[i]) > threshold && diff >= minRel * Math.abs(med) && diff >= resolution && diff > 0;
  });
  return { median: med, mad, madUsed, scores, outlier };
}

/** Round to a number of significant digits (for JSON output; keeps integers and null). */
export function sig(x: number | null | undefined, digits = 6): number | null {
  if (x == null || !Number.isFinite(x)) return null;
  if (x === 0) return 0;
  return Number(x.toPrecision(digits));
}
