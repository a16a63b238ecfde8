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
  // the slope over as much of the spark line as is settled: from a third of the skip after the apex
  // (the collapse has died away by 50 µs) — a longer line reads a slope through the turbulence better
  const slopeFrom = a + Math.max(1, Math.round(skip / 3));
  return { level0, endLocal, levelY, slopeYPerS: sparkSlope(p, lv.sign, slopeFrom, to) };
}

/** Least-squares slope of the spark line's middle 80 %, y per second. */
function sparkSlope(p: Prepared, sign: 1 | -1, from: number, to: number): number | null {
  const span = to - from;
  const f0 = from + Math.floor(span * 0.1);
  const f1 = to - Math.floor(span * 0.1);
  if (f1 - f0 < 3) return null;
  let sx = 0;
  let sy = 0;
  let sxx = 0;
  let sxy = 0;
  const m = f1 - f0;
  for (let k = f0; k < f1; k++) {
    const x = (k - f0) / p.rate;
    const yy = p.v[k];
    sx += x;
    sy += yy;
    sxx += x * x;
    sxy += x * yy;
  }
  const den = m * sxx - sx * sx;
  return den > 0 ? (sign * (m * sxy - sx * sy)) / den : null;
}
