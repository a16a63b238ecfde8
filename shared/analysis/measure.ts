import { prepare, timeAtOf, type Prepared } from "./signal";
import type { Measurements, SignalInput } from "./types";

export type { Measurements } from "./types";

/**
 * State levels by the histogram method of IEEE Std 181-2011 (transitions, pulses and related
 * waveforms): split the histogram at its middle and take the mode of each half.
 */
export function stateLevels(
  v: ArrayLike<number>,
  a: number,
  b: number,
  min: number,
  max: number,
): { base: number; top: number } {
  if (!(max > min)) return { base: min, top: max };
  const BINS = 256;
  const counts = new Uint32Array(BINS);
  const scale = BINS / (max - min);
  // a long window is read at a stride: the histogram's modes do not need every sample
  const step = Math.max(1, Math.floor((b - a) / (1 << 18)));
  for (let i = a; i < b; i += step) {
    let k = ((v[i] - min) * scale) | 0;
    if (k >= BINS) k = BINS - 1;
    else if (k < 0) k = 0;
    counts[k]++;
  }
  let lo = 0;
  for (let k = 1; k < BINS / 2; k++) if (counts[k] > counts[lo]) lo = k;
  let hi = BINS - 1;
  for (let k = BINS - 2; k >= BINS / 2; k--) if (counts[k] > counts[hi]) hi = k;
  const w = (max - min) / BINS;
  // the extreme bins' centres would under-read a sine's peaks: use the extreme itself there
  const base = lo === 0 ? min : min + (lo + 0.5) * w;
  const top = hi === BINS - 1 ? max : min + (hi + 0.5) * w;
  return { base, top };
}

/** Measurements of a prepared window (values scaled by `scale` in the result). */
export function measurePrepared(p: Prepared, scale = 1): Measurements {
  const { v, n } = p;
  const startS = n ? timeAtOf(p, 0) : 0;
  const endS = n ? timeAtOf(p, n - 1) : 0;
  const empty: Measurements = {
    samples: n,
    startS,
    endS,
    min: p.min * scale,
    max: p.max * scale,
    peakToPeak: (p.max - p.min) * scale,
    mean: p.mean * scale,
    rms: p.rms * Math.abs(scale),
    baseLevel: p.min * scale,
    topLevel: p.max * scale,
    frequencyHz: null,
    periodS: null,
    dutyCyclePct: null,
    riseTimeS: null,
    fallTimeS: null,
  };
  if (n < 4 || !(p.max > p.min)) return empty;
  const { base, top } = stateLevels(v, 0, n, p.min, p.max);
  const amp = top - base;
  if (!(amp > 0)) return empty;
  const l10 = base + 0.1 * amp;
  const l50 = base + 0.5 * amp;
  const l90 = base + 0.9 * amp;
  const hyst = 0.1 * amp; // state changes need 40 % / 60 %: noise on the mid level is not a cycle

  // crossing of level L between samples i-1 and i, as a time
  const cross = (i: number, L: number) => {
    const a = v[i - 1];
    const b = v[i];
    const f = b !== a ? (L - a) / (b - a) : 0;
    const ta = timeAtOf(p, i - 1);
    return ta + f * (timeAtOf(p, i) - ta);
  };

  // One compare per sample finds the transitions (hysteresis about the 50 % level); the 10, 50
  // and 90 % crossings are then found by short walks around each transition.
  const hiOn = l50 + hyst;
  const loOn = l50 - hyst;
  let state = v[0] > l50 ? 1 : -1;
  let lastTransition = 0;
  let riseSum = 0;
  let riseN = 0;
  let fallSum = 0;
  let fallN = 0;
  let firstRise = NaN;
  let lastRise = NaN;
  let rises = 0;
  let highSum = 0;
  let highN = 0;
  let i = 1;
  while (i < n) {
    if (state < 0) {
      while (i < n && v[i] <= hiOn) i++;
      if (i >= n) break;
      // rising transition: the last upward crossing of 50 % and of 10 % before i, the first of 90 % after
      let k = i;
      while (k > lastTransition + 1 && v[k - 1] >= l50) k--;
      const has50 = v[k - 1] < l50;
      const t50 = has50 ? cross(k, l50) : NaN;
      let k10 = k;
      while (k10 > lastTransition + 1 && v[k10 - 1] >= l10) k10--;
      const t10 = v[k10 - 1] < l10 ? cross(k10, l10) : NaN;
      let k90 = i;
      while (k90 < n && v[k90] < l90 && v[k90] >= loOn) k90++;
      const t90 = k90 < n && v[k90] >= l90 && v[k90 - 1] < l90 ? cross(k90, l90) : NaN;
      if (has50) {
        if (rises === 0) firstRise = t50;
        lastRise = t50;
        rises++;
      }
      if (Number.isFinite(t10) && Number.isFinite(t90)) {
        riseSum += t90 - t10;
        riseN++;
      }
      state = 1;
      lastTransition = i;
    } else {
      while (i < n && v[i] >= loOn) i++;
      if (i >= n) break;
      let k = i;
      while (k > lastTransition + 1 && v[k - 1] <= l50) k--;
      const has50 = v[k - 1] > l50;
      const t50 = has50 ? cross(k, l50) : NaN;
      let k90 = k;
      while (k90 > lastTransition + 1 && v[k90 - 1] <= l90) k90--;
      const t90 = v[k90 - 1] > l90 ? cross(k90, l90) : NaN;
      let k10 = i;
      while (k10 < n && v[k10] > l10 && v[k10] <= hiOn) k10++;
      const t10 = k10 < n && v[k10] <= l10 && v[k10 - 1] > l10 ? cross(k10, l10) : NaN;
      if (has50 && rises > 0) {
        highSum += t50 - lastRise;
        highN++;
      }
      if (Number.isFinite(t10) && Number.isFinite(t90)) {
        fallSum += t10 - t90;
        fallN++;
      }
      state = -1;
      lastTransition = i;
    }
    i++;
  }
  const out = { ...empty, baseLevel: base * scale, topLevel: top * scale };
  if (rises >= 2 && lastRise > firstRise) {
    const period = (lastRise - firstRise) / (rises - 1);
    out.periodS = period;
    out.frequencyHz = 1 / period;
    if (highN > 0) out.dutyCyclePct = Math.min(100, Math.max(0, (100 * highSum) / highN / period));
  }
  if (riseN > 0) out.riseTimeS = riseSum / riseN;
  if (fallN > 0) out.fallTimeS = fallSum / fallN;
  return out;
}

/**
 * Generic measurements of any channel and window: min, max, peak-to-peak, mean, RMS, frequency
 * and period (rising mid-level crossings), duty cycle, rise and fall time (10–90 %).
 */
export function measure(input: SignalInput, window?: { startS?: number; endS?: number }): Measurements {
  return measurePrepared(prepare(input, window), 1);
}
