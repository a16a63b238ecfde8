/**
 * Min/max decimation of a trace over a time window, for plotting (about two points per pixel).
 *
 * Definition (exact, so a brute-force reference can check it): with span = t1 − t0, the edges are
 * edge(k) = t0 + (k·span)/width for k = 0…width−1 and edge(width) = t1 (see bucketEdge). Bucket k
 * holds the samples with
 *
 *     edge(k) − δ ≤ tᵢ < edge(k+1) − δ,   tᵢ = sampleTime(trace, i),
 *
 * where δ = EDGE_SNAP·span/width + 8·ε·max(|t0|, |t1|) (ε = Number.EPSILON, see edgeSnap) is far
 * below a bucket and only absorbs rounding: a sample that lies on an edge in exact arithmetic
 * (130 µs at 1 MS/s against edge(3) of [100 µs, 200 µs) in 10 buckets, computed as
 * 1.3000000000000002e-4) belongs to the bucket that starts there, whichever of the two roundings
 * came out larger. Membership and the bucket's `t` use the same edge(k). The result lists only
 * buckets that hold at least one sample (empty buckets are left out — also when the window reaches
 * outside the trace); for each, `t` is edge(k) and each series' `min`/`max` are the extremes of that
 * bucket's samples.
 */
import type { TraceWindow } from "./types";
import { ArrayScanner, rangeMinMax, type MinMaxAcc, type MinMaxLevel, type RawScanner } from "./pyramid";

export interface DecimateSource {
  samples: number;
  t0: number;
  sampleRateHz: number;
  time: Float64Array | null;
  channels: ReadonlyArray<{ name: string; values: Float32Array }>;
}

/**
 * Largest width decimateMinMax accepts (a limit of the computation). The window endpoint asks for
 * at most MAX_WINDOW_WIDTH (shared/schemas/traces.ts), well below this.
 */
export const MAX_DECIMATE_WIDTH = 100_000;

/** Fraction of a bucket by which edges are snapped to absorb rounding (see the module comment). */
export const EDGE_SNAP = 1e-9;

/** Throws RangeError unless t0 < t1 are finite and width is a whole number in 1…MAX_DECIMATE_WIDTH. */
export function checkWindow(t0: number, t1: number, width: number): void {
  if (!Number.isFinite(t0) || !Number.isFinite(t1) || !(t1 > t0))
    throw new RangeError("the window needs finite t0 < t1");
  if (!Number.isInteger(width) || width < 1 || width > MAX_DECIMATE_WIDTH) {
    throw new RangeError(`width must be a whole number from 1 to ${MAX_DECIMATE_WIDTH}`);
  }
}

/** Start of bucket k (k = 0…width−1) and, for k = width, the window's end t1: the labels' expression. */
export function bucketEdge(t0: number, t1: number, width: number, k: number): number {
  return k >= width ? t1 : t0 + (k * (t1 - t0)) / width;
}

/** δ of the module comment: how far before an edge a sample still counts as on it. */
export function edgeSnap(t0: number, t1: number, width: number): number {
  return (EDGE_SNAP * (t1 - t0)) / width + 8 * Number.EPSILON * Math.max(Math.abs(t0), Math.abs(t1));
}

/** The lowest time that belongs to bucket k or later: edge(k) − δ. */
function threshold(t0: number, t1: number, width: number, k: number, snap: number): number {
  return bucketEdge(t0, t1, width, k) - snap;
}

/**
 * The bucket of a time: −1 before the window, width at or after its end, else the k with
 * edge(k) − δ ≤ ts < edge(k+1) − δ. So `bucketOf(ts) < k` exactly when ts < edge(k) − δ.
 */
export function bucketOf(ts: number, t0: number, t1: number, width: number): number {
  const snap = edgeSnap(t0, t1, width);
  // an estimate, then corrected by comparing with the edges themselves
  let k = Math.floor(((ts - t0) / (t1 - t0)) * width);
  if (!(k >= -1)) k = -1;
  if (k > width) k = width;
  while (k >= 0 && ts < threshold(t0, t1, width, k, snap)) k--;
  while (k < width && ts >= threshold(t0, t1, width, k + 1, snap)) k++;
  return k;
}

/**
 * Boundaries of the buckets as sample indexes: b[k] is the first sample i ≥ from with
 * timeAt(i) ≥ edge(k) − δ (n when none), for k = 0…width, so bucket k holds samples
 * [b[k], b[k+1]). `timeAt` must be non-decreasing in i.
 */
export function bucketBoundaries(
  n: number,
  timeAt: (i: number) => number,
  t0: number,
  t1: number,
  width: number,
  from = 0,
): Int32Array {
  const b = new Int32Array(width + 1);
  const snap = edgeSnap(t0, t1, width);
  let lo0 = from;
  for (let k = 0; k <= width; k++) {
    const thr = threshold(t0, t1, width, k, snap);
    let lo = lo0;
    let hi = n;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (timeAt(mid) >= thr) hi = mid;
      else lo = mid + 1;
    }
    b[k] = lo;
    lo0 = lo;
  }
  return b;
}

/**
 * The same boundaries for a uniform trace, sample i at tr0 + i / rate (sampleTime's arithmetic),
 * without a search: b[k] = ⌈(edge(k) − δ − tr0)·rate⌉, then moved by whole samples until
 * sample b[k] is the first whose time (computed as sampleTime does) is ≥ edge(k) − δ.
 */
export function uniformBoundaries(
  n: number,
  tr0: number,
  rate: number,
  t0: number,
  t1: number,
  width: number,
): Int32Array {
  const b = new Int32Array(width + 1);
  const snap = edgeSnap(t0, t1, width);
  let prev = 0;
  for (let k = 0; k <= width; k++) {
    const thr = threshold(t0, t1, width, k, snap);
    let i = Math.ceil((thr - tr0) * rate);
    if (!(i >= prev)) i = prev;
    if (i > n) i = n;
    while (i > prev && tr0 + (i - 1) / rate >= thr) i--;
    while (i < n && tr0 + i / rate < thr) i++;
    b[k] = i;
    prev = i;
  }
  return b;
}

/** Boundaries for a trace in memory (uniform or with a time array). */
export function traceBoundaries(
  src: Pick<DecimateSource, "samples" | "t0" | "sampleRateHz" | "time">,
  t0: number,
  t1: number,
  width: number,
): Int32Array {
  const time = src.time;
  if (time) return bucketBoundaries(src.samples, (i) => time[i], t0, t1, width);
  return uniformBoundaries(src.samples, src.t0, src.sampleRateHz, t0, t1, width);
}

export interface WindowChannel {
  name: string;
  raw: RawScanner;
  levels: readonly MinMaxLevel[];
}

/** Builds the window from bucket boundaries and per-channel min/max sources. */
export function assembleWindow(
  boundaries: Int32Array,
  t0: number,
  t1: number,
  width: number,
  channels: readonly WindowChannel[],
): TraceWindow {
  const t: number[] = [];
  const series = channels.map((c) => ({ name: c.name, min: [] as number[], max: [] as number[] }));
  const acc: MinMaxAcc = { min: Infinity, max: -Infinity };
  for (let k = 0; k < width; k++) {
    const a = boundaries[k];
    const b = boundaries[k + 1];
    if (b <= a) continue;
    t.push(bucketEdge(t0, t1, width, k));
    for (let c = 0; c < channels.length; c++) {
      acc.min = Infinity;
      acc.max = -Infinity;
      rangeMinMax(channels[c].raw, channels[c].levels, a, b, acc);
      series[c].min.push(acc.min);
      series[c].max.push(acc.max);
    }
  }
  return { t, series };
}

/**
 * Min/max decimation of an in-memory trace over [t0, t1) into `width` buckets (see the module
 * comment for the exact definition). `pyramids[c]`, if given, speeds up channel c.
 */
export function decimateMinMax(
  src: DecimateSource,
  t0: number,
  t1: number,
  width: number,
  opts: { pyramids?: readonly (readonly MinMaxLevel[])[] } = {},
): TraceWindow {
  checkWindow(t0, t1, width);
  const bnd = traceBoundaries(src, t0, t1, width);
  return assembleWindow(
    bnd,
    t0,
    t1,
    width,
    src.channels.map((c, i) => ({ name: c.name, raw: new ArrayScanner(c.values), levels: opts.pyramids?.[i] ?? [] })),
  );
}
