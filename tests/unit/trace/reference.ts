import { sampleTime, type TraceWindow } from "../../../shared/trace/types";
import type { DecimateSource } from "../../../shared/trace/decimate";

/**
 * Brute-force min/max decimation, written straight from the definition in the API contract
 * (issue 3, `GET /api/traces/:id/window`: "bucket k covers its share of [t0, t1]; min/max are that
 * bucket's extremes") as made exact in the module comment of shared/trace/decimate.ts:
 *
 *   edge(k) = t0 + (k·(t1 − t0))/width for k < width, edge(width) = t1;
 *   δ = 1e-9·(t1 − t0)/width + 8·Number.EPSILON·max(|t0|, |t1|)   (absorbs rounding only);
 *   sample i is in bucket k  ⇔  tᵢ ≥ edge(k) − δ  and  tᵢ < edge(k+1) − δ.
 *
 * Membership is decided only by comparing each sample's time (sampleTime) with those edges — no
 * floor of a quotient, no index arithmetic, no search, no pyramid; nothing is imported from the
 * code under test except its input type. Samples are visited in time order and the bucket pointer
 * only moves forward (sampleTime is non-decreasing). Empty buckets are left out; t = edge(k).
 */
export function bruteForceWindow(src: DecimateSource, t0: number, t1: number, width: number): TraceWindow {
  const edges = new Float64Array(width + 1);
  for (let k = 0; k < width; k++) edges[k] = t0 + (k * (t1 - t0)) / width;
  edges[width] = t1;
  const delta = (1e-9 * (t1 - t0)) / width + 8 * Number.EPSILON * Math.max(Math.abs(t0), Math.abs(t1));
  const inBucket = (t: number, k: number) => t >= edges[k] - delta && t < edges[k + 1] - delta;

  const mins = src.channels.map(() => new Float64Array(width).fill(Infinity));
  const maxs = src.channels.map(() => new Float64Array(width).fill(-Infinity));
  const seen = new Uint8Array(width);
  let k = 0;
  for (let i = 0; i < src.samples; i++) {
    const t = sampleTime(src, i);
    if (t < edges[0] - delta) continue; // before the window
    while (k < width && !inBucket(t, k) && t >= edges[k + 1] - delta) k++;
    if (k >= width) break; // at or after the window's end
    if (!inBucket(t, k)) continue;
    seen[k] = 1;
    for (let j = 0; j < src.channels.length; j++) {
      const x = src.channels[j].values[i];
      if (x < mins[j][k]) mins[j][k] = x;
      if (x > maxs[j][k]) maxs[j][k] = x;
    }
  }
  const ks: number[] = [];
  for (let b = 0; b < width; b++) if (seen[b]) ks.push(b);
  return {
    t: ks.map((b) => edges[b]),
    series: src.channels.map((c, j) => ({
      name: c.name,
      min: ks.map((b) => mins[j][b]),
      max: ks.map((b) => maxs[j][b]),
    })),
  };
}
