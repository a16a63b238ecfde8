/**
 * Secondary ignition: a lone glitch told from a one-sample firing line by what follows it.
 *
 * At 1 MS/s a firing line whose rise and collapse take a microsecond or less can sit on a single
 * sample, its neighbours far below it — the same shape as a glitch (one sample knocked off by
 * interference or a converter error). What follows tells them apart: a glitch leaves the signal
 * where it was (the samples after it carry on from the samples before it), a firing line leaves it
 * collapsing into a spark line, well above where it was before the rise. The number of samples at
 * the top is no sign either way.
 */

/** Samples either side of a candidate whose median gives the level before and after it. */
const LEVEL_WINDOW_S = 10e-6;

/**
 * Is sample k (y: the excursion on the firing side, baseline at 0) a lone glitch? Its shape: far
 * beyond both neighbours, which themselves barely move; and nothing follows it — the level after it
 * (the next sample, and the median of the next 10 µs) is not above the level before it (the median of
 * the 10 µs before) by more than the noise and 3 % of the sample's height.
 */
export function isLoneGlitch(y: (k: number) => number, k: number, n: number, noise: number, rate: number): boolean {
  if (k < 2 || k + 2 >= n) return false;
  const yk = y(k);
  const jump = yk - Math.max(y(k - 1), y(k + 1));
  const around = Math.max(Math.abs(y(k - 1) - y(k - 2)), Math.abs(y(k + 1) - y(k + 2)));
  if (!(jump > Math.max(6 * noise, 0.2 * yk) && jump > 2 * around)) return false;
  const w = Math.max(3, Math.round(rate * LEVEL_WINDOW_S));
  const before = medianOf(y, Math.max(0, k - w), k);
  const after = medianOf(y, k + 1, Math.min(n, k + 1 + w));
  const thr = Math.max((6 * noise) / Math.sqrt(w), 0.03 * yk);
  const collapses = y(k + 1) - before > Math.max(thr, 4 * noise) && after - before > thr;
  return !collapses;
}

function medianOf(y: (k: number) => number, from: number, to: number): number {
  const xs: number[] = [];
  for (let k = from; k < to; k++) xs.push(y(k));
  if (!xs.length) return 0;
  xs.sort((a, b) => a - b);
  const m = xs.length >> 1;
  return xs.length % 2 ? xs[m] : (xs[m - 1] + xs[m]) / 2;
}
