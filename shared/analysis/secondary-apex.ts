/**
 * Secondary ignition: the firing line's height — the event's largest excursion from the baseline.
 *
 * A firing line's tip is a cusp, not a rounded top: the voltage rises until the gap breaks down, then
 * collapses within a microsecond or two (common practice, no source). Between two samples the real
 * apex may be higher than either, but by how much the samples cannot tell; a parabola through a cusp
 * overshoots both the samples and the apex. So the height is the highest sample, and an interpolation
 * may move it only by what the noise justifies:
 * - a lone glitch (a sample far beyond both neighbours that nothing follows, secondary-glitch) is
 *   left out at 1 MS/s and up; a one-sample firing line, followed by its collapse into the spark
 *   line, is not a glitch;
 * - with five or more samples within the top of the apex (5 % of its height, or 4 noise RMS when
 *   that is more), a least-squares parabola through them averages the noise instead of riding on it;
 * - with fewer, a parabola through the highest sample and its neighbours when both are at least half
 *   the highest (a resolved, rounded top);
 * - either way the reading stays between two noise RMS below the highest sample (the noise may have
 *   raised that sample) and one noise RMS above it (it may have lowered it; a cusp gives no more);
 *   with no noise it is the highest sample — a lower bound when the apex falls between samples (the
 *   capture review calls a too-coarse capture undersampled).
 */
import { isLoneGlitch } from "./secondary-glitch";
import { GLITCH_RATE_HZ, type SecondaryLevels } from "./secondary-levels";
import type { Prepared } from "./signal";

export interface Apex {
  /** index of the highest (non-glitch) sample */
  index: number;
  /** fractional index of the apex */
  at: number;
  /** apex height above the baseline (y), stored units */
  height: number;
  /** highest single sample in the search window (for clipping), y */
  rawPeak: number;
  /** index of a lone glitch left out, or −1 */
  glitch: number;
}

/** Least-squares y = c0 + c1·x + c2·x² over the given points; null when singular. */
function fitParabola(xs: number[], ys: number[]): [number, number, number] | null {
  let s0 = 0,
    s1 = 0,
    s2 = 0,
    s3 = 0,
    s4 = 0,
    t0 = 0,
    t1 = 0,
    t2 = 0;
  for (let i = 0; i < xs.length; i++) {
    const x = xs[i];
    const x2 = x * x;
    s0 += 1;
    s1 += x;
    s2 += x2;
    s3 += x2 * x;
    s4 += x2 * x2;
    t0 += ys[i];
    t1 += x * ys[i];
    t2 += x2 * ys[i];
  }
  // Cramer's rule on the 3×3 normal equations
  const det = s0 * (s2 * s4 - s3 * s3) - s1 * (s1 * s4 - s3 * s2) + s2 * (s1 * s3 - s2 * s2);
  if (!(Math.abs(det) > 0)) return null;
  const d0 = t0 * (s2 * s4 - s3 * s3) - s1 * (t1 * s4 - s3 * t2) + s2 * (t1 * s3 - s2 * t2);
  const d1 = s0 * (t1 * s4 - t2 * s3) - t0 * (s1 * s4 - s3 * s2) + s2 * (s1 * t2 - t1 * s2);
  const d2 = s0 * (s2 * t2 - s3 * t1) - s1 * (s1 * t2 - s2 * t1) + t0 * (s1 * s3 - s2 * s2);
  return [d0 / det, d1 / det, d2 / det];
}

/** The apex of the firing line whose search window is [from, to). */
export function firingLineApex(p: Prepared, lv: SecondaryLevels, from: number, to: number): Apex {
  const { v, n } = p;
  const { sign, base, noise } = lv;
  const y = (k: number) => sign * (v[k] - base);
  const a = Math.max(0, from);
  const b = Math.min(n, Math.max(a + 1, to));
  let m = a;
  for (let k = a; k < b; k++) if (y(k) > y(m)) m = k;
  const rawPeak = y(m);
  let glitch = -1;
  if (p.rate >= GLITCH_RATE_HZ && isLoneGlitch(y, m, n, noise, p.rate)) {
    glitch = m;
    m = m === a ? a + 1 : a;
    for (let k = a; k < b; k++) if (k !== glitch && y(k) > y(m)) m = k;
  }
  const ym = y(m);
  const withinNoise = (h: number) => Math.min(ym + noise, Math.max(ym - 2 * noise, h));
  const thr = ym - Math.max(0.05 * ym, 4 * noise);
  const maxHalf = Math.max(2, Math.ceil(p.rate * 30e-6));
  const inTop = (k: number) => k >= 0 && k < n && (k === glitch || y(k) >= thr);
  let lo = m;
  while (m - lo < maxHalf) {
    if (inTop(lo - 1)) lo -= 1;
    else if (inTop(lo - 2)) lo -= 2;
    else break;
  }
  let hi = m;
  while (hi - m < maxHalf) {
    if (inTop(hi + 1)) hi += 1;
    else if (inTop(hi + 2)) hi += 2;
    else break;
  }
  const xs: number[] = [];
  const ys: number[] = [];
  for (let k = lo; k <= hi; k++) {
    if (k === glitch) continue;
    xs.push(k - m);
    ys.push(y(k));
  }
  if (xs.length >= 5) {
    const c = fitParabola(xs, ys);
    if (c && c[2] < 0) {
      const x = -c[1] / (2 * c[2]);
      if (x >= lo - m && x <= hi - m)
        return { index: m, at: m + x, height: withinNoise(c[0] - (c[1] * c[1]) / (4 * c[2])), rawPeak, glitch };
    }
    return { index: m, at: m, height: ym, rawPeak, glitch };
  }
  if (m > 0 && m + 1 < n && m - 1 !== glitch && m + 1 !== glitch) {
    const ya = y(m - 1);
    const yc = y(m + 1);
    if (ym > 0 && Math.min(ya, yc) >= 0.5 * ym) {
      const den = ya - 2 * ym + yc;
      if (den < 0) {
        const d = Math.max(-0.5, Math.min(0.5, (0.5 * (ya - yc)) / den));
        const h = ym - 0.25 * (ya - yc) * d;
        return { index: m, at: m + d, height: withinNoise(Math.max(h, ym)), rawPeak, glitch };
      }
    }
  }
  return { index: m, at: m, height: ym, rawPeak, glitch };
}
