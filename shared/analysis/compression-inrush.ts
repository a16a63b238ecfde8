/**
 * Relative compression: the starter's inrush under the first compression strokes.
 *
 * At key-on the motor stands still and draws far more than while turning; the current falls back
 * towards the cranking level as the motor speeds up and its back-EMF rises — close to an
 * exponential, I_c + (I_stall − I_c)·e^(−t/τ), with τ the motor's spin-up time (a DC motor under a
 * steady load; common practice, no source). The compression strokes ride on that fall: at 300 rpm
 * on eight cylinders a stroke comes every 50 ms, and the first ones come while most of the inrush
 * is left, too steep for a stroke to show a peak of its own.
 *
 * The tail is found where the strokes cannot bias it: a moving average over exactly one stroke
 * period takes out the strokes (a periodic signal averages to its mean over its period) and leaves
 * the cranking level plus the tail, still an exponential of the same τ (the average of e^(−t/τ) over
 * a window is e^(−t/τ) times a known factor). That average is fitted by least squares (τ by a search,
 * level and height linear), from half a period after the inrush's peak to half a period before the
 * current stops. Before the stroke period is known, a first estimate comes from the inrush's own
 * early decay (inrushTail); it stays when the inrush dies within half a stroke period (then the
 * strokes barely ride on it, and the one-period average holds too little of it to be fitted well).
 */

export interface InrushTail {
  /** the tail above the cranking level at decimated index k (0 before the inrush's peak) */
  at: (k: number) => number;
  /** the tail's height at the inrush's peak */
  height: number;
}

/**
 * The inrush's tail over the cranking level `base`: A·e^(−k/τ) from its peak, fitted (least squares
 * on the logarithm) on the early decay (90 % down to 35 % of the peak, before any turn upward);
 * null when it does not decay.
 */
export function inrushTail(x: Float32Array, hiIdx: number, base: number, rate: number): InrushTail | null {
  // the smoothed peak can sit a sample or two from the raw one
  let k0 = hiIdx;
  for (let k = Math.max(0, hiIdx - 5); k < Math.min(x.length, hiIdx + 10); k++) if (x[k] > x[k0]) k0 = k;
  const h = x[k0] - base;
  if (!(h > 0)) return null;
  const ks: number[] = [];
  const ls: number[] = [];
  const limit = Math.min(x.length, k0 + Math.ceil(rate * 1.0));
  for (let k = k0 + 1; k < limit; k++) {
    if (x[k] > x[k - 1]) break; // the first stroke starts to rise
    // the early decay only: lower down, the first stroke's rise already adds to it
    const e = x[k] - base;
    if (e < 0.35 * h) break;
    if (e <= 0.9 * h) {
      ks.push(k - k0);
      ls.push(Math.log(e));
    }
  }
  if (ks.length < 3) return null;
  const mk = ks.reduce((a, b) => a + b, 0) / ks.length;
  const ml = ls.reduce((a, b) => a + b, 0) / ls.length;
  let sxy = 0;
  let sxx = 0;
  for (let i = 0; i < ks.length; i++) {
    sxy += (ks[i] - mk) * (ls[i] - ml);
    sxx += (ks[i] - mk) ** 2;
  }
  const slope = sxx > 0 ? sxy / sxx : 0;
  if (!(slope < 0)) return null;
  const a = Math.exp(ml - slope * mk);
  return { at: (k: number) => (k >= k0 ? Math.min(h, a * Math.exp(slope * (k - k0))) : 0), height: h };
}

/** Centred moving average of `w` samples (w odd) of d over [a, b). */
function movingAverage(d: Float32Array, a: number, b: number, w: number): Float64Array {
  const h = w >> 1;
  const out = new Float64Array(Math.max(0, b - a));
  let s = 0;
  for (let k = a - h; k <= a + h; k++) s += d[k];
  for (let k = a; k < b; k++) {
    out[k - a] = s / w;
    if (k + 1 < b) s += d[k + h + 1] - d[k - h];
  }
  return out;
}

/** Least squares of y ≈ B + c·e over the samples; the sum of squared residuals, B and c. */
function fitLevelAndHeight(y: Float64Array, e: Float64Array): { sse: number; B: number; c: number } {
  const n = y.length;
  let se = 0;
  let sy = 0;
  let see = 0;
  let sey = 0;
  for (let i = 0; i < n; i++) {
    se += e[i];
    sy += y[i];
    see += e[i] * e[i];
    sey += e[i] * y[i];
  }
  const den = n * see - se * se;
  if (!(Math.abs(den) > 0)) return { sse: Infinity, B: 0, c: 0 };
  const c = (n * sey - se * sy) / den;
  const B = (sy - c * se) / n;
  let sse = 0;
  for (let i = 0; i < n; i++) sse += (y[i] - B - c * e[i]) ** 2;
  return { sse, B, c };
}

/**
 * The inrush's tail from the one-period moving average (see the module's note): d the decimated
 * current, `hiIdx` the inrush's peak, `stop` where the current stops, P the stroke period (samples).
 * Null when the average holds less than two periods, does not fall, or falls within half a period.
 */
export function periodicTail(d: Float32Array, hiIdx: number, stop: number, P: number): InrushTail | null {
  const w = Math.max(3, Math.round(P) | 1);
  const h = w >> 1;
  const a = hiIdx + h + 1;
  const b = stop - h - 1;
  if (b - a < 2 * P) return null;
  const y = movingAverage(d, a, b, w);
  const e = new Float64Array(y.length);
  const sseAt = (tau: number) => {
    for (let i = 0; i < e.length; i++) e[i] = Math.exp(-(a + i - hiIdx) / tau);
    return fitLevelAndHeight(y, e);
  };
  // τ from a tenth of a period to forty periods, on a log grid, then narrowed by golden sections
  const lo = Math.log(0.1 * P);
  const hi = Math.log(40 * P);
  const steps = 48;
  let best = 0;
  let bestSse = Infinity;
  for (let i = 0; i <= steps; i++) {
    const r = sseAt(Math.exp(lo + ((hi - lo) * i) / steps)).sse;
    if (r < bestSse) {
      bestSse = r;
      best = i;
    }
  }
  let x0 = lo + ((hi - lo) * Math.max(0, best - 1)) / steps;
  let x1 = lo + ((hi - lo) * Math.min(steps, best + 1)) / steps;
  const g = (Math.sqrt(5) - 1) / 2;
  for (let it = 0; it < 30; it++) {
    const m0 = x1 - g * (x1 - x0);
    const m1 = x0 + g * (x1 - x0);
    if (sseAt(Math.exp(m0)).sse <= sseAt(Math.exp(m1)).sse) x1 = m1;
    else x0 = m0;
  }
  const tau = Math.exp((x0 + x1) / 2);
  const fit = sseAt(tau);
  if (!(fit.c > 0) || !Number.isFinite(fit.sse) || tau < 0.5 * P) return null;
  // the window's average of e^(−k/τ) is e^(−k/τ) times this factor
  let kappa = 0;
  for (let j = -h; j <= h; j++) kappa += Math.exp(-j / tau);
  kappa /= w;
  const c = fit.c / kappa;
  const height = Math.max(0, d[hiIdx] - fit.B);
  return { at: (k: number) => (k >= hiIdx ? Math.min(height, c * Math.exp(-(k - hiIdx) / tau)) : 0), height };
}
