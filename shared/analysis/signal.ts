import { channelUnits, type ChannelUnits } from "../trace/units";
import type { SignalInput } from "./types";

/**
 * A window of one channel, ready for analysis: values as stored in the file's unit (no copy for a
 * Float32Array); `toPhysical` converts them to the channel's physical unit (`unit`), `toScope` to the
 * unit the scope's settings are typed in (`units.scopeUnit`); times come from `timeAtOf`.
 */
export interface Prepared {
  v: Float32Array;
  n: number;
  rate: number;
  dt: number;
  /** index of v[0] in the channel */
  offset: number;
  t0: number;
  time: ArrayLike<number> | null;
  /** the channel's unit model (shared/trace/units.ts) */
  units: ChannelUnits;
  /** stored value → physical unit (kV at the plug, A through a clamp, V at the scope…) */
  toPhysical: number;
  /** stored value → the unit of the scope's settings (volts/division, trigger level) */
  toScope: number;
  /** the physical unit every result is reported in */
  unit: string;
  name: string;
  min: number;
  max: number;
  minIdx: number;
  maxIdx: number;
  mean: number;
  rms: number;
  /** samples at the screen's edges, counted when prepared with the screen (see detectClipping) */
  extremes: { screen: { min: number; max: number; top: number; bottom: number } | null };
}

export function timeAtOf(p: Pick<Prepared, "time" | "t0" | "rate" | "offset">, i: number): number {
  const k = i + p.offset;
  return p.time ? p.time[k] : p.t0 + k / p.rate;
}

/** Time of a fractional index (linear between samples). */
export function timeAtFrac(p: Prepared, x: number): number {
  const i = Math.max(0, Math.min(p.n - 1, Math.floor(x)));
  const f = x - i;
  const a = timeAtOf(p, i);
  if (f <= 0 || i + 1 >= p.n) return a;
  return a + f * (timeAtOf(p, i + 1) - a);
}

/**
 * Prepares a window of a channel. `screen` is the screen's range in stored units (see screenRange);
 * `units` the channel's unit model (default: from the file's unit alone, no probe scale).
 */
export function prepare(
  input: SignalInput,
  window?: { startS?: number; endS?: number },
  screen?: { min: number; max: number } | null,
  units: ChannelUnits = channelUnits(input.unit),
): Prepared {
  const all = input.values instanceof Float32Array ? input.values : Float32Array.from(input.values);
  const rate = input.sampleRateHz;
  if (!(rate > 0) || !Number.isFinite(rate)) throw new RangeError("sampleRateHz must be a positive number");
  const t0 = input.t0 ?? 0;
  const time = input.time ?? null;
  let start = 0;
  let end = all.length;
  if (window && (window.startS != null || window.endS != null)) {
    const tOf = (i: number) => (time ? time[i] : t0 + i / rate);
    if (window.startS != null) {
      let lo = 0;
      let hi = all.length;
      while (lo < hi) {
        const mid = (lo + hi) >> 1;
        if (tOf(mid) < window.startS) lo = mid + 1;
        else hi = mid;
      }
      start = lo;
    }
    if (window.endS != null) {
      let lo = start;
      let hi = all.length;
      while (lo < hi) {
        const mid = (lo + hi) >> 1;
        if (tOf(mid) <= window.endS) lo = mid + 1;
        else hi = mid;
      }
      end = lo;
    }
  }
  const v = start === 0 && end === all.length ? all : all.subarray(start, end);
  const n = v.length;
  let min = Infinity;
  let max = -Infinity;
  let minIdx = 0;
  let maxIdx = 0;
  let sum = 0;
  let sumSq = 0;
  for (let i = 0; i < n; i++) {
    const x = v[i];
    if (x < min) {
      min = x;
      minIdx = i;
    }
    if (x > max) {
      max = x;
      maxIdx = i;
    }
    sum += x;
    sumSq += x * x;
  }
  let screenCounts: Prepared["extremes"]["screen"] = null;
  if (screen && screen.max > screen.min) {
    // the screen's edges are in the file's unit here
    const tol = 0.005 * (screen.max - screen.min);
    let top = 0;
    let bottom = 0;
    if (max >= screen.max - tol || min <= screen.min + tol) {
      for (let i = 0; i < n; i++) {
        if (v[i] >= screen.max - tol) top++;
        else if (v[i] <= screen.min + tol) bottom++;
      }
    }
    screenCounts = { min: screen.min, max: screen.max, top, bottom };
  }
  return {
    v,
    n,
    rate,
    dt: 1 / rate,
    offset: start,
    t0,
    time,
    units,
    toPhysical: units.fromFile,
    toScope: units.scopeFromFile,
    unit: units.unit,
    name: input.name ?? "A",
    min: n ? min : 0,
    max: n ? max : 0,
    minIdx,
    maxIdx,
    mean: n ? sum / n : 0,
    rms: n ? Math.sqrt(sumSq / n) : 0,
    extremes: { screen: screenCounts },
  };
}

/**
 * Centred moving average (boxcar of `w` samples) of sign·(v − base) over [a, b) into a new array;
 * edges use the samples available. O(b − a) with a running sum.
 */
export function boxcar(v: ArrayLike<number>, a: number, b: number, w: number, sign = 1, base = 0): Float32Array {
  const n = Math.max(0, b - a);
  const out = new Float32Array(n);
  if (n === 0) return out;
  if (w <= 1) {
    for (let i = 0; i < n; i++) out[i] = sign * (v[a + i] - base);
    return out;
  }
  const h = w >> 1;
  let lo = 0;
  let hi = -1;
  let s = 0;
  for (let i = 0; i < n; i++) {
    const wantLo = Math.max(0, i - h);
    const wantHi = Math.min(n - 1, i + h);
    while (hi < wantHi) {
      hi++;
      s += v[a + hi];
    }
    while (lo < wantLo) {
      s -= v[a + lo];
      lo++;
    }
    out[i] = sign * (s / (hi - lo + 1) - base);
  }
  return out;
}

/** Next value of the 1-2-5 sequence at or above x (volts/division, time/division). */
export function niceCeil(x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) return x;
  const e = Math.floor(Math.log10(x));
  const base = 10 ** e;
  for (const m of [1, 2, 5, 10]) {
    const c = m * base;
    if (c >= x * (1 - 1e-9)) return Number(c.toPrecision(3));
  }
  return 10 * base;
}

/** A round number near x (for suggested trigger levels). */
export function roundNice(x: number): number {
  if (x === 0 || !Number.isFinite(x)) return x;
  const e = Math.floor(Math.log10(Math.abs(x)));
  const step = 10 ** (e - 1) * 5;
  return Number((Math.round(x / step) * step).toPrecision(3));
}
