/**
 * Secondary ignition, ringing stage: the coil's ringing after the spark line. When the spark goes
 * out, the coil's inductance and its capacitance ring as a damped LC circuit (f ≈ 1/(2π√(LC))).
 *
 * Rule: the first ringing peak R1 is the highest point after the spark line before the first swing
 * past the baseline by 5 % of R1 (no such swing: no ringing). After it, each firing-side lobe counts
 * while its peak is at least RINGING_PEAK_FRACTION of R1; the first that is not ends the count. The
 * frequency comes from the baseline crossings of the counted lobes.
 */
import type { SecondaryLevels } from "./secondary-levels";
import { timeAtFrac, type Prepared } from "./signal";

/** ringing peaks count while at least this fraction of the first ringing peak */
export const RINGING_PEAK_FRACTION = 0.2;

export interface Ringing {
  oscillations: number;
  ringingHz: number | null;
  /** local index where the ringing count stopped */
  stop: number;
}

export function coilRinging(
  p: Prepared,
  lv: SecondaryLevels,
  a: number,
  ys: Float32Array,
  endIdx: number,
  ringWin: number,
): Ringing {
  const rate = p.rate;
  const noiseS = lv.noiseS;
  const len = ys.length;
  let oscillations = 0;
  let ringingHz: number | null = null;
  let j = Math.max(1, endIdx);
  const limit = Math.min(len, endIdx + ringWin);
  let m = -Infinity;
  let lastZero = NaN;
  const zeroAt = (k: number) => {
    const y0 = ys[k - 1];
    const y1 = ys[k];
    return k - 1 + (y0 !== y1 ? y0 / (y0 - y1) : 0);
  };
  let firstNeg = -1;
  for (; j < limit; j++) {
    if (ys[j - 1] >= 0 !== ys[j] >= 0) lastZero = zeroAt(j);
    if (ys[j] > m) m = ys[j];
    if (ys[j] < -Math.max(4 * noiseS, 0.05 * m)) {
      firstNeg = j;
      break;
    }
  }
  if (!(firstNeg > 0 && m > 4 * noiseS)) return { oscillations, ringingHz, stop: j };
  const r1 = m;
  const h = Math.max(4 * noiseS, 0.05 * r1);
  const peakTh = RINGING_PEAK_FRACTION * r1;
  const crossings: number[] = [];
  if (Number.isFinite(lastZero)) crossings.push(lastZero);
  oscillations = 1;
  let state = -1;
  let lobeMax = 0;
  let upZero = NaN;
  let since = firstNeg;
  const stale = Math.ceil(rate * 2e-3);
  let done = false;
  for (j = firstNeg + 1; j < limit && !done; j++) {
    if (ys[j - 1] >= 0 !== ys[j] >= 0) lastZero = zeroAt(j);
    if (state < 0) {
      if (ys[j] > h) {
        state = 1;
        lobeMax = ys[j];
        upZero = lastZero;
        since = j;
      } else if (j - since > stale) done = true;
    } else {
      if (ys[j] > lobeMax) lobeMax = ys[j];
      if (ys[j] < -h) {
        if (lobeMax >= peakTh) {
          oscillations++;
          if (Number.isFinite(upZero)) crossings.push(upZero);
          if (Number.isFinite(lastZero)) crossings.push(lastZero);
          state = -1;
          since = j;
        } else done = true;
      } else if (j - since > stale) {
        if (lobeMax >= peakTh) oscillations++;
        done = true;
      }
    }
  }
  if (!done && state > 0 && lobeMax >= peakTh) {
    oscillations++;
    if (Number.isFinite(upZero)) crossings.push(upZero);
  }
  if (crossings.length >= 2) {
    const t0c = timeAtFrac(p, a + crossings[0]);
    const t1c = timeAtFrac(p, a + crossings[crossings.length - 1]);
    if (t1c > t0c) ringingHz = (crossings.length - 1) / (2 * (t1c - t0c));
  }
  return { oscillations, ringingHz, stop: j };
}
