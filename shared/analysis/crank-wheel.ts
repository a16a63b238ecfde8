/**
 * Crank wheels with missing teeth: teeth from a sensor's signal, the gap by its length against the
 * tooth pitch, and the wheel's pattern.
 *
 * An N−k wheel has N tooth positions, k of them left out at one place: the gap spans k + 1 pitches,
 * and N − k teeth pass between two gaps (one revolution). A tooth that does not cross the hysteresis
 * (chipped or ground off) also leaves a longer period, but shorter than the wheel's gap: it is put
 * back with amplitude 0, so the teeth after it keep their numbers and it is flagged as damaged.
 */
import { timeAtFrac, type Prepared } from "./signal";
import { median } from "./stats";

/** Common missing-tooth wheels (common practice, no source). */
export const KNOWN_WHEELS: readonly { positions: number; missing: number }[] = [
  { positions: 60, missing: 2 },
  { positions: 60, missing: 1 },
  { positions: 36, missing: 2 },
  { positions: 36, missing: 1 },
  { positions: 24, missing: 1 },
  { positions: 12, missing: 1 },
];

/** A period at least this many times its neighbours' is a gap or a lost tooth. */
const LONG_RATIO = 1.6;
/** How far a long period may be from a whole number of pitches. */
const PITCH_TOLERANCE = 0.4;

export interface Teeth {
  /** tooth times (s) */
  teeth: number[];
  /** peak-to-peak amplitude of each tooth, stored units (0 for a tooth put back) */
  amps: number[];
}

/** One pass over the signal: tooth crossings and their amplitudes (see analyzeCrank). */
export function detectTeeth(p: Prepared, centre: number, h: number, dir: 1 | -1): Teeth {
  const { v, n } = p;
  const teeth: number[] = [];
  const amps: number[] = [];
  let state = 0; // 0: not armed yet, 1: above +h seen, −1: after a tooth's crossing
  let lastDown = -1;
  let posMax = -Infinity;
  let negMin = Infinity;
  let pendingPos = 0;
  let prev = dir * (v[0] - centre);
  for (let i = 1; i < n; i++) {
    const x = dir * (v[i] - centre);
    if (prev >= 0 && x < 0) lastDown = i;
    prev = x;
    if (state >= 0) {
      if (x > posMax) posMax = x;
      if (x > h) state = 1;
      if (state === 1 && x < -h && lastDown > 0) {
        const a = dir * (v[lastDown - 1] - centre);
        const b = dir * (v[lastDown] - centre);
        teeth.push(timeAtFrac(p, lastDown - 1 + (a !== b ? a / (a - b) : 0)));
        pendingPos = posMax;
        negMin = x;
        state = -1;
      }
    } else {
      if (x < negMin) negMin = x;
      if (x > h) {
        amps.push(pendingPos - negMin);
        state = 1;
        posMax = x;
      }
    }
  }
  if (state === -1) amps.push(pendingPos - negMin);
  return { teeth, amps };
}

/** period k over the median of up to three periods either side of it */
export function localRatio(per: number[], k: number): number {
  const xs: number[] = [];
  for (let q = k - 3; q <= k + 3; q++) if (q !== k && q >= 0 && q < per.length) xs.push(per[q]);
  const ref = median(xs);
  return ref != null && ref > 0 ? per[k] / ref : 0;
}

function periodsOf(teeth: number[]): number[] {
  const per: number[] = [];
  for (let k = 1; k < teeth.length; k++) per.push(teeth[k] - teeth[k - 1]);
  return per;
}

export interface Gaps extends Teeth {
  periods: number[];
  /** index k of each period teeth[k] → teeth[k+1] that is the wheel's gap */
  gapIdx: number[];
  ratios: number[];
  /** pitches the gap spans (k + 1), or 0 without a gap */
  gapPitches: number;
  /** how far the gaps are from a whole number of pitches (lower is cleaner; Infinity without a gap) */
  score: number;
}

/**
 * The wheel's gap: the longest of the long periods that come at whole numbers of pitches. Shorter
 * long periods are lost teeth, put back evenly spaced with amplitude 0.
 */
export function findGaps(t: Teeth): Gaps {
  const teeth = [...t.teeth];
  const amps = [...t.amps];
  let per = periodsOf(teeth);
  const long: { k: number; pitches: number }[] = [];
  for (let k = 0; k < per.length; k++) {
    const r = localRatio(per, k);
    const whole = Math.round(r);
    if (r >= LONG_RATIO && Math.abs(r - whole) <= PITCH_TOLERANCE) long.push({ k, pitches: whole });
  }
  const gapPitches = long.reduce((m, x) => Math.max(m, x.pitches), 0);
  // lost teeth, last first so the indices before stay valid
  for (const x of [...long].reverse()) {
    if (x.pitches >= gapPitches || x.k >= amps.length) continue;
    const t0 = teeth[x.k];
    const step = (teeth[x.k + 1] - t0) / x.pitches;
    for (let q = x.pitches - 1; q >= 1; q--) {
      teeth.splice(x.k + 1, 0, t0 + q * step);
      amps.splice(x.k + 1, 0, 0);
    }
  }
  per = periodsOf(teeth);
  const gapIdx: number[] = [];
  const ratios: number[] = [];
  if (gapPitches >= 2) {
    for (let k = 0; k < per.length; k++) {
      const r = localRatio(per, k);
      if (Math.abs(r - gapPitches) <= PITCH_TOLERANCE) {
        gapIdx.push(k);
        ratios.push(r);
      }
    }
  }
  const score = ratios.length ? ratios.reduce((acc, r) => acc + Math.abs(r - gapPitches), 0) / ratios.length : Infinity;
  return { teeth, amps, periods: per, gapIdx, ratios, gapPitches, score };
}

export interface WheelMatch {
  positions: number;
  missing: number;
  from: "revolution" | "one-gap";
}

/**
 * The wheel from its gaps: the teeth counted between gaps (the count most revolutions agree on)
 * plus the missing ones; with a single gap, the only common wheel with that gap whose teeth per
 * revolution can hold the teeth seen on either side of it. Null when no common wheel fits.
 */
export function matchWheel(g: Gaps): WheelMatch | null {
  if (g.gapIdx.length === 0 || g.gapPitches < 2) return null;
  const missing = g.gapPitches - 1;
  if (g.gapIdx.length >= 2) {
    const counts: number[] = [];
    for (let i = 1; i < g.gapIdx.length; i++) counts.push(g.gapIdx[i] - g.gapIdx[i - 1]);
    // the count a common wheel explains, agreed on by all revolutions but at most one (a miscount)
    const fits = KNOWN_WHEELS.filter((w) => w.missing === missing)
      .map((w) => ({ w, agree: counts.filter((c) => c === w.positions - w.missing).length }))
      .filter((x) => x.agree >= Math.max(1, counts.length - 1))
      .sort((a, b) => b.agree - a.agree);
    return fits.length ? { positions: fits[0].w.positions, missing, from: "revolution" } : null;
  }
  const k = g.gapIdx[0];
  const seen = Math.max(k + 1, g.teeth.length - k - 1);
  const fits = KNOWN_WHEELS.filter((w) => w.missing === missing && w.positions - w.missing >= seen);
  return fits.length === 1 ? { positions: fits[0].positions, missing, from: "one-gap" } : null;
}
