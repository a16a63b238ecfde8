import { sampleTime, type TraceWindow } from "../../../shared/trace/types";
import type { DecimateSource } from "../../../shared/trace/decimate";

/**
 * Brute-force min/max decimation, written straight from the definition in the API contract
 * (issue "Cases … trace viewer": "bucket k covers its share of [t0, t1]; min/max are that
 * bucket's extremes") as made exact in shared/trace/decimate.ts: sample i belongs to bucket
 * floor(((tᵢ − t0) / (t1 − t0)) · width) when that is in 0…width−1; empty buckets are left out;
 * t = bucket start. Visits every sample; no pyramid, no search.
 */
export function bruteForceWindow(src: DecimateSource, t0: number, t1: number, width: number): TraceWindow {
  const mins = src.channels.map(() => new Float64Array(width).fill(Infinity));
  const maxs = src.channels.map(() => new Float64Array(width).fill(-Infinity));
  const seen = new Uint8Array(width);
  for (let i = 0; i < src.samples; i++) {
    const k = Math.floor(((sampleTime(src, i) - t0) / (t1 - t0)) * width);
    if (k < 0 || k >= width) continue;
    seen[k] = 1;
    for (let j = 0; j < src.channels.length; j++) {
      const x = src.channels[j].values[i];
      if (x < mins[j][k]) mins[j][k] = x;
      if (x > maxs[j][k]) maxs[j][k] = x;
    }
  }
  const ks: number[] = [];
  for (let k = 0; k < width; k++) if (seen[k]) ks.push(k);
  return {
    t: ks.map((k) => t0 + (k * (t1 - t0)) / width),
    series: src.channels.map((c, j) => ({ name: c.name, min: ks.map((k) => mins[j][k]), max: ks.map((k) => maxs[j][k]) })),
  };
}
