import { describe, expect, it } from "vitest";
import * as ss from "simple-statistics";
import {
  fastMedian,
  histogramQuantile,
  median,
  medianAbsoluteDeviation,
  metricStats,
  modifiedZScores,
  noiseRms,
  robustLevelAndNoise,
} from "../../../shared/analysis/stats";
import { createRng } from "../../helpers/prng";

function sample(seed: number, n: number, f: (r: ReturnType<typeof createRng>) => number): number[] {
  const r = createRng(seed);
  return Array.from({ length: n }, () => f(r));
}

describe("statistics against simple-statistics (npm reference library)", () => {
  const sets = [
    sample(1, 101, (r) => r.normal() * 3 + 10),
    sample(2, 1000, (r) => r.range(-5, 5)),
    sample(3, 64, (r) => Math.exp(r.normal())),
    [4, 1, 3, 2],
  ];
  it.each(sets.map((s, i) => [i, s] as const))("median, MAD, min/max of set %i", (_i, xs) => {
    // reference: simple-statistics median / medianAbsoluteDeviation / min / max
    expect(median(xs)).toBeCloseTo(ss.median(xs), 12);
    expect(medianAbsoluteDeviation(xs)).toBeCloseTo(ss.medianAbsoluteDeviation(xs), 12);
    const st = metricStats(xs);
    expect(st.min).toBe(ss.min(xs));
    expect(st.max).toBe(ss.max(xs));
    expect(st.median).toBeCloseTo(ss.median(xs), 12);
  });

  it("histogram quantiles match simple-statistics' quantile to float32 precision", () => {
    const xs = sample(4, 20001, (r) => r.normal());
    const f = Float32Array.from(xs);
    const lo = Math.min(...f);
    const hi = Math.max(...f);
    const sorted = Array.from(f).sort((a, b) => a - b);
    for (const q of [0.01, 0.25, 0.5, 0.9, 0.995]) {
      // reference: simple-statistics quantileSorted on the same float32 values (rank ⌊q(n−1)⌋ here)
      const ref = sorted[Math.floor(q * (f.length - 1))];
      expect(Math.abs(histogramQuantile(f, q, lo, hi) - ref)).toBeLessThan(1e-5);
      expect(Math.abs(ss.quantileSorted(sorted, q) - ref)).toBeLessThan(2e-3); // the two rank rules agree closely
    }
    expect(Math.abs(fastMedian(f) - ss.median(Array.from(f)))).toBeLessThan(1e-5);
  });

  it("noise RMS from first differences reads white noise of known RMS", () => {
    // physics of white noise: Δ of two independent N(0, σ²) samples has RMS σ√2; 1.4826·MAD estimates σ
    const r = createRng(7);
    const n = 200_000;
    const v = new Float32Array(n);
    for (let i = 0; i < n; i++) v[i] = 0.05 * r.normal() + Math.sin(i / 5000); // slow signal under the noise
    expect(noiseRms(v)).toBeGreaterThan(0.05 * 0.97);
    expect(noiseRms(v)).toBeLessThan(0.05 * 1.03);
    const big = new Float32Array(1_000_000);
    for (let i = 0; i < big.length; i++) big[i] = 2 + 0.01 * r.normal();
    const rob = robustLevelAndNoise(big);
    expect(rob.median).toBeCloseTo(2, 3);
    expect(rob.noise / 0.01).toBeGreaterThan(0.97);
    expect(rob.noise / 0.01).toBeLessThan(1.03);
  });
});

describe("modified z-score (Iglewicz & Hoaglin, How to Detect and Handle Outliers, 1993)", () => {
  it("M = 0.6745·(x − median)/MAD, computed with simple-statistics, flags |M| > 3.5", () => {
    // a spread (MAD 0.5) above the guard's floor of 2 % of the median, so M is the published formula
    const xs = [10.4, 9.6, 10.9, 9.3, 10.0, 10.6, 15.0];
    const med = ss.median(xs);
    const mad = ss.medianAbsoluteDeviation(xs);
    const z = modifiedZScores(xs)!;
    xs.forEach((x, i) => expect(z.scores[i]).toBeCloseTo((0.6745 * (x - med)) / mad, 9));
    expect(mad).toBeCloseTo(0.5, 12);
    // 15.0: M = 0.6745·4.6/0.5 ≈ 6.2 > 3.5 and 44 % above the median: an outlier; 9.3: M ≈ −1.5, not
    expect(z.outlier).toEqual([false, false, false, false, false, false, true]);
  });

  it("never flags a healthy set, two values, or MAD = 0 with a difference that does not matter", () => {
    // healthy cylinders within a few per cent of each other
    expect(modifiedZScores([8.1, 8.3, 7.9, 8.0, 8.2, 8.05])!.outlier.some(Boolean)).toBe(false);
    // MAD = 0 (most equal): a 1 % difference is no outlier (guarded spread, 10 % rule)
    expect(modifiedZScores([5, 5, 5, 5, 5.05])!.outlier.some(Boolean)).toBe(false);
    // MAD = 0 and a large difference: still found
    expect(modifiedZScores([5, 5, 5, 5, 8])!.outlier).toEqual([false, false, false, false, true]);
    // whole counts: 3 3 3 2 is ordinary; 3 3 3 0 is not
    expect(modifiedZScores([3, 3, 3, 2], { resolution: 1 })!.outlier.some(Boolean)).toBe(false);
    expect(modifiedZScores([3, 3, 3, 0], { resolution: 1 })!.outlier).toEqual([false, false, false, true]);
    expect(modifiedZScores([1, 100])!.outlier.some(Boolean)).toBe(false);
  });
});
