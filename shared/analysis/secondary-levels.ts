/**
 * Secondary ignition, stage 0: the levels every later stage works from — the baseline, the noise,
 * which side of the baseline the firing lines are on, and the thresholds and time constants.
 */
import { isLoneGlitch } from "./secondary-glitch";
import type { Prepared } from "./signal";
import { robustLevelAndNoise } from "./stats";

// Time constants of the detector (seconds). The firing line rises in microseconds and falls to the
// spark line within tens of microseconds; the spark line lasts about 0.5–3 ms; the ringing a few
// periods of 3–15 kHz (common practice, no source).
export const SMOOTH_S = 10e-6; // boxcar for the spark line and the ringing (well under a ringing period)
export const APEX_SEARCH_S = 60e-6;
export const SPARK_SKIP_S = 150e-6; // the firing line has settled into the spark line by then
export const SPARK_PROBE_S = 250e-6; // window for the first spark-line level
export const MAX_BURN_S = 8e-3;
export const RING_WINDOW_S = 4e-3;
/** At this rate and above a lone sample far off, that nothing follows, is a glitch (secondary-glitch). */
export const GLITCH_RATE_HZ = 1e6;

export interface SecondaryLevels {
  /** the baseline (median of the capture), stored units */
  base: number;
  /** noise RMS, stored units */
  noise: number;
  /** +1: firing lines above the baseline; −1: below (inverted) */
  sign: 1 | -1;
  /** extremes of y = sign·(v − base), lone glitches left out at 1 MS/s and above */
  ymax: number;
  ymin: number;
  /** a crossing of this height (y) starts a candidate event */
  thDet: number;
  /** boxcar width (samples) for the spark line and ringing, and the noise left after it */
  w: number;
  noiseS: number;
}

/** Largest and smallest values, leaving out a lone glitch (secondary-glitch: a sample nothing follows). */
function supportedExtremes(v: Float32Array, n: number, base: number, noise: number, rate: number) {
  let max = -Infinity;
  let min = Infinity;
  const up = (k: number) => v[k] - base;
  const down = (k: number) => base - v[k];
  for (let i = 0; i < n; i++) {
    const a = i > 0 ? v[i - 1] : v[i];
    const b = i + 1 < n ? v[i + 1] : v[i];
    const x = v[i];
    if (x > max && !(x > Math.max(a, b) && isLoneGlitch(up, i, n, noise, rate))) max = x;
    if (x < min && !(x < Math.min(a, b) && isLoneGlitch(down, i, n, noise, rate))) min = x;
  }
  return { max, min };
}

export function secondaryLevels(p: Prepared): SecondaryLevels {
  const { v, n, rate } = p;
  const robust = n ? robustLevelAndNoise(v) : { median: 0, noise: 0 };
  const base = robust.median;
  const noise = robust.noise;
  const ext = n && rate >= GLITCH_RATE_HZ ? supportedExtremes(v, n, base, noise, rate) : { max: p.max, min: p.min };
  const pos = ext.max - base;
  const neg = base - ext.min;
  const sign: 1 | -1 = pos >= neg ? 1 : -1;
  const ymax = sign > 0 ? pos : neg;
  const ymin = sign > 0 ? ext.min - base : base - ext.max;
  const w = Math.max(1, Math.round(rate * SMOOTH_S) | 1);
  return {
    base,
    noise,
    sign,
    ymax,
    ymin,
    // ten noise RMS clears the noise; on a very noisy capture (a firing line under 20 noise RMS) no more
    // than half the tallest excursion, and six noise RMS at least (a crossing by chance about once in
    // 10⁹ samples of Gaussian noise)
    thDet: Math.max(Math.min(10 * noise, 0.5 * ymax), 6 * noise, 0.03 * ymax, 1e-12),
    w,
    noiseS: noise / Math.sqrt(w),
  };
}
