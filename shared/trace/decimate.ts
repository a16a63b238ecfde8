/**
 * Min/max decimation of a trace over a time window, for plotting (about two points per pixel).
 *
 * Definition (exact, so a brute-force reference can check it): with span = t1 − t0, sample i at
 * time tᵢ = sampleTime(trace, i) falls in bucket k = Math.floor(((tᵢ − t0) / span) · width) when
 * 0 ≤ k < width; bucket k thus covers [t0 + k·span/width, t0 + (k+1)·span/width). The result lists
 * only buckets that hold at least one sample (empty buckets are left out — also when the window
 * reaches outside the trace); for each, `t` is the bucket's start, t0 + (k·span)/width, and each
 * series' `min`/`max` are the extremes of that bucket's samples.
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

/** Largest width accepted. */
export const MAX_WINDOW_WIDTH = 100_000;

/** Throws RangeError unless t0 < t1 are finite and width is a whole number in 1…MAX_WINDOW_WIDTH. */
export function checkWindow(t0: number, t1: number, width: number): void {
  if (!Number.isFinite(t0) || !Number.isFinite(t1) || !(t1 > t0)) throw new RangeError("the window needs finite t0 < t1");
  if (!Number.isInteger(width) || width < 1 || width > MAX_WINDOW_WIDTH) {
    throw new RangeError(`width must be a whole number from 1 to ${MAX_WINDOW_WIDTH}`);
  }
}

/** The bucket of a time (may be < 0 or ≥ width: outside the window). */
export function bucketOf(ts: number, t0: number, t1: number, width: number): number {
  return Math.floor(((ts - t0) / (t1 - t0)) * width);
}

/**
 * Boundaries of the buckets as sample indexes: b[k] is the first sample whose bucket is ≥ k
 * (n when none), for k = 0…width, so bucket k holds samples [b[k], b[k+1]). `timeAt` must be
 * non-decreasing in i.
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
  let lo0 = from;
  for (let k = 0; k <= width; k++) {
    let lo = lo0;
    let hi = n;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (bucketOf(timeAt(mid), t0, t1, width) >= k) hi = mid;
      else lo = mid + 1;
    }
    b[k] = lo;
    lo0 = lo;
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
  const tr0 = src.t0;
  const rate = src.sampleRateHz;
  // same arithmetic as sampleTime()
  return bucketBoundaries(src.samples, (i) => tr0 + i / rate, t0, t1, width);
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
  const span = t1 - t0;
  const acc: MinMaxAcc = { min: Infinity, max: -Infinity };
  for (let k = 0; k < width; k++) {
    const a = boundaries[k];
    const b = boundaries[k + 1];
    if (b <= a) continue;
    t.push(t0 + (k * span) / width);
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
