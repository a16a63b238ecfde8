/**
 * Secondary ignition, measuring stage: the spark line after a firing line — its first level (which
 * also tells a firing from a dwell start or a ringing bump), its end (where it collapses or jumps),
 * its median level and its slope.
 */
import { MAX_BURN_S, SPARK_PROBE_S, SPARK_SKIP_S, type SecondaryLevels } from "./secondary-levels";
import type { Prepared } from "./signal";
import { fastMedian } from "./stats";

const LEVEL_TRACK_S = 0.2e-3; // time constant of the spark-line level tracker
const PERSIST_S = 4e-6; // a departure from the spark line must hold this long

export function medianOfSmall(a: Float32Array, from: number, to: number): number {
  const xs = Array.from(a.subarray(Math.max(0, from), Math.max(from, to))).sort((x, y) => x - y);
  const k = xs.length;
  if (k === 0) return 0;
  return k % 2 ? xs[k >> 1] : (xs[(k >> 1) - 1] + xs[k >> 1]) / 2;
}

export interface SparkProbe {
  /** median level of the smoothed signal over the probe window (y, stored units) */
  level: number;
  /** a spark line holds there: a level clear of the noise, on the firing side for most of the window */
  sustained: boolean;
}

/** Sample counts of the spark-line windows at this rate. */
export function sparkWindows(rate: number): { skip: number; probe: number; maxBurn: number } {
  return {
    skip: Math.max(2, Math.ceil(rate * SPARK_SKIP_S)),
    probe: Math.max(3, Math.ceil(rate * SPARK_PROBE_S)),
    maxBurn: Math.ceil(rate * MAX_BURN_S),
  };
}

/**
 * The spark line's first level, from `ys` (the smoothed y from the apex on). A firing leaves a spark
 * line of sustained duration on the firing side; a dwell start is followed by the coil's charge (at
 * or beyond the baseline on the other side), a ringing bump by more ringing.
 */
export function probeSpark(ys: Float32Array, rate: number, lv: SecondaryLevels, height: number): SparkProbe {
  const { skip, probe } = sparkWindows(rate);
  const level = medianOfSmall(ys, skip, skip + probe);
  const floor = Math.max(4 * lv.noiseS, 0.02 * height);
  if (!(level > floor)) return { level, sustained: false };
  let on = 0;
  const end = Math.min(ys.length, skip + probe);
  for (let k = skip; k < end; k++) if (ys[k] > 0.4 * level) on++;
  return { level, sustained: on >= 0.8 * (end - skip) };
}

export interface SparkLine {
  level0: number;
  /** fractional index (from the apex) of the spark line's end */
  endLocal: number;
  /** median of the spark line (y, stored units) */
  levelY: number;
  /** least-squares slope, y per second (positive: away from the baseline) */
  slopeYPerS: number | null;
}

/**
 * Tracks the spark line from `skip` after the apex until it departs (collapses or jumps) for good;
 * null when the capture ends during the spark line (an incomplete event, not measured).
 */
export function trackSparkLine(
  p: Prepared,
  lv: SecondaryLevels,
  a: number,
  ys: Float32Array,
  atEnd: boolean,
): SparkLine | null {
  const rate = p.rate;
  const { skip, probe, maxBurn } = sparkWindows(rate);
  const len = ys.length;
  const level0 = medianOfSmall(ys, skip, skip + probe);
  const bandUp = Math.max(5 * lv.noiseS, 0.35 * Math.abs(level0));
  const bandDown = Math.max(5 * lv.noiseS, 0.45 * Math.abs(level0));
  const small = Math.max(2 * lv.noiseS, 0.08 * Math.abs(level0));
  const alpha = Math.min(0.5, 1 / (rate * LEVEL_TRACK_S));
  const persist = Math.max(1, Math.round(rate * PERSIST_S));
  let lvl = level0;
  let dep = -1;
  let dir = 0;
  const burnLimit = Math.min(len, maxBurn);
  for (let j = skip; j < burnLimit; j++) {
    const d = ys[j] - lvl;
    const dj = d > bandUp ? 1 : d < -bandDown ? -1 : 0;
    if (dj !== 0) {
      let held = true;
      for (let k = j + 1; k < Math.min(len, j + persist); k++) {
        const dk = ys[k] - lvl;
        if (dj > 0 ? dk <= bandUp : dk >= -bandDown) {
          held = false;
          break;
        }
      }
      if (held) {
        dep = j;
        dir = dj;
        break;
      }
    }
    lvl += alpha * (ys[j] - lvl);
  }
  let endLocal: number;
  if (dep < 0) {
    if (atEnd && burnLimit === len) return null;
    endLocal = burnLimit - 1;
  } else {
    // walk back to where the departure began
    let k = dep - 1;
    while (k > skip && dir * (ys[k] - lvl) > small) k--;
    const e0 = dir * (ys[k] - lvl);
    const e1 = dir * (ys[k + 1] - lvl);
    const f = e1 > e0 ? Math.min(1, Math.max(0, (small - e0) / (e1 - e0))) : 0;
    endLocal = k + f;
  }
  const from = a + skip;
  const to = Math.max(from + 1, a + Math.floor(endLocal));
  const levelY = lv.sign * (fastMedian(p.v, from, to) - lv.base);
  return { level0, endLocal, levelY, slopeYPerS: sparkSlope(p, lv, a, ys, level0, endLocal) };
}

/**
 * Where the firing line's collapse has settled into the spark line (samples from the apex). The
 * collapse is close to exponential (the coil's capacitance discharging into the spark's plasma): it
 * takes t₁₀ to fall to within 10 % of its drop and three times as long to fall to within 0.1 %
 * (ln 1000 = 3·ln 10) — below the spark line's own turbulence. Never before two smoothing widths,
 * never after the skip the first level is read from.
 */
function settledFrom(p: Prepared, lv: SecondaryLevels, a: number, ys: Float32Array, level0: number): number {
  const { skip } = sparkWindows(p.rate);
  const top = lv.sign * (p.v[a] - lv.base);
  const near = level0 + 0.1 * Math.max(0, top - level0);
  let t10 = skip;
  for (let j = 1; j < Math.min(ys.length, skip); j++) {
    if (ys[j] <= near) {
      t10 = j;
      break;
    }
  }
  return Math.min(skip, Math.max(2 * lv.w, 3 * t10));
}

interface Line {
  slope: number;
  /** y at local index 0 */
  at0: number;
}

/** Least-squares line through y = sign·(v − base) over local indices [j0, j1) from the apex a. */
function fitLine(p: Prepared, lv: SecondaryLevels, a: number, j0: number, j1: number): Line | null {
  const m = j1 - j0;
  if (m < 3) return null;
  let sx = 0;
  let sy = 0;
  let sxx = 0;
  let sxy = 0;
  for (let j = j0; j < j1; j++) {
    const x = j - j0;
    const y = lv.sign * (p.v[a + j] - lv.base);
    sx += x;
    sy += y;
    sxx += x * x;
    sxy += x * y;
  }
  const den = m * sxx - sx * sx;
  if (!(den > 0)) return null;
  const slope = (m * sxy - sx * sy) / den;
  return { slope, at0: (sy - slope * sx) / m - slope * j0 };
}

/**
 * The spark line's slope, y per second (positive: away from the baseline): a least-squares line
 * through the whole settled spark line. The spark line's turbulence is correlated over tens of
 * microseconds, so the slope's error falls as the line's length to the power 3/2: every settled
 * sample counts, and none of the collapse before it or of what follows its end may (a step of the
 * line's own size in the last few microseconds tilts a short line more than its turbulence does).
 * A core line is fitted from where the collapse has settled to a tenth of the line before the end
 * found; a start still bending away from it by more than three times the line's own scatter is left
 * out, and the line is followed toward the end for as long as it stays within that scatter (the
 * first departure on the smoothed signal, less half a smoothing width: an extinction bump, the
 * ringing's first swing); then the line is fitted again over all of it.
 */
function sparkSlope(
  p: Prepared,
  lv: SecondaryLevels,
  a: number,
  ys: Float32Array,
  level0: number,
  endLocal: number,
): number | null {
  const last = Math.min(ys.length, Math.floor(endLocal));
  let j0 = settledFrom(p, lv, a, ys, level0);
  let core = last - Math.max(lv.w, Math.floor(0.1 * (last - j0)));
  const minLen = Math.max(3, 4 * lv.w);
  if (core - j0 < minLen) {
    // too short a line for the margins: its middle 80 %
    j0 = Math.floor(last * 0.1);
    core = last - Math.floor(last * 0.1);
    const line = fitLine(p, lv, a, j0, core);
    return line ? line.slope * p.rate : null;
  }
  const line = fitLine(p, lv, a, j0, core);
  if (!line) return null;
  const res = (j: number) => Math.abs(ys[j] - (line.at0 + line.slope * j));
  let ss = 0;
  for (let j = j0; j < core; j++) ss += res(j) ** 2;
  const thr = Math.max(3 * Math.sqrt(ss / (core - j0)), 3 * lv.noiseS);
  while (core - j0 > minLen && res(j0) > thr) j0++;
  let k = core;
  if (res(k - 1) > thr) while (k - j0 > minLen && res(k - 1) > thr) k--;
  else while (k < last && res(k) <= thr) k++;
  const j1 = Math.max(j0 + minLen, k - (lv.w >> 1));
  return (fitLine(p, lv, a, j0, j1) ?? line).slope * p.rate;
}
