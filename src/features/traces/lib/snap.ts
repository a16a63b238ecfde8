/**
 * The trace's level at a time, read from min/max window data as the viewer draws it (a band
 * between the polyline of bucket maxima and the polyline of bucket minima). Pins sit on this line:
 * their stored level is the trace's value at their time, and their dot is placed from the data on
 * screen at every draw, so it stays on the firing line at any zoom. Pure.
 */

/** Min/max buckets: `t` is each bucket's start, in the same time base as the query. */
export interface Envelope {
  t: ArrayLike<number>;
  min: ArrayLike<number>;
  max: ArrayLike<number>;
}

/** Index of the last bucket starting at or before `time`, or −1 before the first (binary search). */
export function bucketAt(t: ArrayLike<number>, time: number): number {
  let lo = 0;
  let hi = t.length - 1;
  if (hi < 0 || !(time >= t[0])) return -1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (t[mid] <= time) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

const finite = (x: number) => Number.isFinite(x);

/** A typical bucket width: the smallest gap between bucket starts (empty buckets are left out). */
function bucketWidth(t: ArrayLike<number>): number {
  let w = Infinity;
  for (let k = 1; k < t.length; k++) if (t[k] - t[k - 1] > 0) w = Math.min(w, t[k] - t[k - 1]);
  return w;
}

/**
 * The band's extent at `time`: each of min and max interpolated linearly between the buckets either
 * side (the straight segments drawn between them, also across empty buckets, as drawn); null before
 * the first bucket or more than a bucket past the last.
 */
export function bandAt(e: Envelope, time: number): { lo: number; hi: number } | null {
  const n = Math.min(e.t.length, e.min.length, e.max.length);
  if (n === 0) return null;
  const k = bucketAt(e.t, time);
  if (k < 0) return null;
  const w = bucketWidth(e.t);
  if (k === n - 1) {
    const inside = time - e.t[k] <= (Number.isFinite(w) ? w : 0) || time === e.t[k];
    return inside && finite(e.min[k]) && finite(e.max[k]) ? { lo: e.min[k], hi: e.max[k] } : null;
  }
  const t0 = e.t[k];
  const t1 = e.t[k + 1];
  const f = t1 > t0 ? (time - t0) / (t1 - t0) : 0;
  const lo = e.min[k] + (e.min[k + 1] - e.min[k]) * f;
  const hi = e.max[k] + (e.max[k + 1] - e.max[k]) * f;
  if (!finite(lo) || !finite(hi)) return null;
  return { lo: Math.min(lo, hi), hi: Math.max(lo, hi) };
}

/** The range of the samples in the bucket that holds `time` (the pixel's column), or null. */
export function bucketRangeAt(e: Envelope, time: number): { lo: number; hi: number } | null {
  const n = Math.min(e.t.length, e.min.length, e.max.length);
  const k = bucketAt(e.t, time);
  if (k < 0 || k >= n) return null;
  const w = bucketWidth(e.t);
  if (k === n - 1 && !(time - e.t[k] <= (Number.isFinite(w) ? w : 0))) return null;
  return finite(e.min[k]) && finite(e.max[k])
    ? { lo: Math.min(e.min[k], e.max[k]), hi: Math.max(e.min[k], e.max[k]) }
    : null;
}

/**
 * The trace's level at `time` nearest to `near`: a value on the trace there — within the samples of
 * the bucket that holds the time (a firing line squeezed into one pixel is all there) or on the
 * band as drawn between buckets — the one nearest to `near`. So a click near the top of a firing
 * line pins its peak, a click anywhere above a spark line pins the spark line. Null where the data
 * does not reach.
 */
export function traceLevelAt(e: Envelope, time: number, near: number): number | null {
  const ranges = [bucketRangeAt(e, time), bandAt(e, time)].filter((r): r is { lo: number; hi: number } => r != null);
  if (!ranges.length) return null;
  if (!finite(near)) return (ranges[0].lo + ranges[0].hi) / 2;
  let best = NaN;
  for (const r of ranges) {
    const v = Math.min(Math.max(near, r.lo), r.hi);
    if (!(Math.abs(v - near) >= Math.abs(best - near))) best = v;
  }
  return best;
}

/** The band's lowest and highest level over [ta, tb] (both ends interpolated), or null. */
export function bandBetween(e: Envelope, ta: number, tb: number): { lo: number; hi: number } | null {
  const a = Math.min(ta, tb);
  const b = Math.max(ta, tb);
  let lo = Infinity;
  let hi = -Infinity;
  for (const end of [bandAt(e, a), bandAt(e, b)]) {
    if (!end) continue;
    lo = Math.min(lo, end.lo);
    hi = Math.max(hi, end.hi);
  }
  const n = Math.min(e.t.length, e.min.length, e.max.length);
  for (let k = Math.max(0, bucketAt(e.t, a) + 1); k < n && e.t[k] <= b; k++) {
    if (finite(e.min[k])) lo = Math.min(lo, e.min[k]);
    if (finite(e.max[k])) hi = Math.max(hi, e.max[k]);
  }
  return lo <= hi ? { lo, hi } : null;
}
