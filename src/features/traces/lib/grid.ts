/** Division grid: at the capture view exactly the scope's divisions, when zoomed a 1-2-5 step. */

/** The smallest step of the 1-2-5 sequence that is ≥ x (x > 0). */
export function niceStep(x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) return 1;
  const exp = Math.floor(Math.log10(x));
  const base = 10 ** exp;
  for (const m of [1, 2, 5, 10]) {
    const s = m * base;
    if (s >= x * (1 - 1e-9)) return s;
  }
  return 10 * base;
}

/** The 1-2-5 step nearest to x on a log scale (x > 0): 217 µs → 200 µs, 400 µs → 500 µs. */
export function niceStepNear(x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) return 1;
  const exp = Math.floor(Math.log10(x));
  const base = 10 ** exp;
  let best = base;
  for (const m of [1, 2, 5, 10]) if (Math.abs(Math.log((m * base) / x)) < Math.abs(Math.log(best / x))) best = m * base;
  return best;
}

/**
 * Step between grid lines for a visible span: the capture's own per-division value while the view
 * spans `divisions` of it, otherwise the 1-2-5 step nearest to span / divisions (so a zoomed view
 * keeps about as many divisions as the screen: 7 to 14 of them).
 */
export function divisionStep(span: number, perDiv: number, divisions: number): number {
  const want = span / divisions;
  if (perDiv > 0 && Math.abs(want - perDiv) <= perDiv * 1e-6) return perDiv;
  return niceStepNear(want);
}

/** All values anchor + k·step inside [lo, hi] (inclusive, with float tolerance), ascending. */
export function gridLines(lo: number, hi: number, step: number, anchor: number, maxLines = 1000): number[] {
  if (!(step > 0) || !(hi >= lo)) return [];
  const eps = step * 1e-7;
  const kFirst = Math.ceil((lo - anchor - eps) / step);
  const kLast = Math.floor((hi - anchor + eps) / step);
  const out: number[] = [];
  for (let k = kFirst; k <= kLast && out.length < maxLines; k++) {
    const v = anchor + k * step;
    // snap float noise to zero so labels read "0" rather than "1e-17"
    out.push(Math.abs(v) < eps ? 0 : v);
  }
  return out;
}

/** Labels for grid lines: every nth when the lines are closer than minPx. */
export function labelEvery(count: number, plotPx: number, minPx: number): number {
  if (count <= 1) return 1;
  const spacing = plotPx / Math.max(1, count - 1);
  return Math.max(1, Math.ceil(minPx / Math.max(spacing, 1e-9)));
}
