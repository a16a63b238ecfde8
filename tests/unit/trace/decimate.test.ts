import { describe, expect, it } from "vitest";
import { decimateMinMax, checkWindow } from "../../../shared/trace/decimate";
import { buildPyramid, rangeMinMax, ArrayScanner, pyramidBlockSizes } from "../../../shared/trace/pyramid";
import type { ParsedTrace } from "../../../shared/trace/types";
import { bruteForceWindow } from "./reference";
import { createRng, randomTrace, randomWindow } from "./helpers";

function ramp(n: number, rate: number): ParsedTrace {
  const values = Float32Array.from({ length: n }, (_, i) => i);
  return { samples: n, sampleRateHz: rate, t0: 0, durationS: n / rate, time: null, channels: [{ name: "A", unit: "V", values, min: 0, max: n - 1 }], warnings: [] };
}

describe("decimateMinMax", () => {
  it("worked example: a ramp 0…9 at 1 Hz over [0, 10) in 5 buckets", () => {
    // by hand: bucket k covers [2k, 2k + 2) → samples 2k and 2k + 1
    const w = decimateMinMax(ramp(10, 1), 0, 10, 5);
    expect(w.t).toEqual([0, 2, 4, 6, 8]);
    expect(w.series).toEqual([{ name: "A", min: [0, 2, 4, 6, 8], max: [1, 3, 5, 7, 9] }]);
  });

  it("worked example: a window partly outside the trace leaves out the empty buckets", () => {
    // [-4, 6) in 5 buckets of 2 s: buckets 0, 1 (before the trace) are empty; bucket 2 = [0, 2)
    const w = decimateMinMax(ramp(10, 1), -4, 6, 5);
    expect(w.t).toEqual([0, 2, 4]);
    expect(w.series[0].min).toEqual([0, 2, 4]);
    expect(w.series[0].max).toEqual([1, 3, 5]);
    // entirely after the trace: nothing
    expect(decimateMinMax(ramp(10, 1), 20, 30, 4)).toEqual({ t: [], series: [{ name: "A", min: [], max: [] }] });
  });

  it("more buckets than samples: one sample per non-empty bucket", () => {
    const w = decimateMinMax(ramp(4, 1), 0, 4, 40);
    expect(w.t).toEqual([0, 1, 2, 3]);
    expect(w.series[0].min).toEqual([0, 1, 2, 3]);
    expect(w.series[0].max).toEqual([0, 1, 2, 3]);
  });

  it("matches the brute-force reference on random traces, windows and widths (with and without pyramid)", () => {
    const rng = createRng(20240611);
    let nonEmpty = 0;
    for (let trial = 0; trial < 60; trial++) {
      const n = trial < 50 ? rng.int(1, 6000) : rng.int(4096 * 2, 70_000);
      const trace = randomTrace(rng, n, rng.int(1, 3), rng.next() < 0.4);
      const pyramids = trace.channels.map((c) => buildPyramid(c.values));
      for (let w = 0; w < 6; w++) {
        const [t0, t1] = randomWindow(rng, trace);
        const width = rng.pick([1, 2, 3, 17, 640, 2000, rng.int(1, 5000)]);
        const expected = bruteForceWindow(trace, t0, t1, width);
        if (expected.t.length > 0) nonEmpty++;
        expect(decimateMinMax(trace, t0, t1, width)).toEqual(expected);
        expect(decimateMinMax(trace, t0, t1, width, { pyramids })).toEqual(expected);
      }
    }
    // most windows overlap the trace, so the comparison is not between empty results
    expect(nonEmpty).toBeGreaterThan(200);
  });

  it("rejects nonsense windows", () => {
    expect(() => checkWindow(1, 1, 10)).toThrow(RangeError);
    expect(() => checkWindow(0, Number.NaN, 10)).toThrow(RangeError);
    expect(() => checkWindow(0, 1, 0)).toThrow(RangeError);
    expect(() => checkWindow(0, 1, 2.5)).toThrow(RangeError);
  });
});

describe("min/max pyramid", () => {
  it("range extremes equal a plain scan for random ranges, across all levels", () => {
    const rng = createRng(7);
    const n = 300_000; // levels of 64, 4096 and 262144 samples
    expect(pyramidBlockSizes(n)).toEqual([64, 4096, 262_144]);
    const v = Float32Array.from({ length: n }, () => rng.normal());
    const levels = buildPyramid(v);
    const raw = new ArrayScanner(v);
    for (let k = 0; k < 300; k++) {
      const a = rng.int(0, n - 1);
      const b = rng.next() < 0.3 ? Math.min(n, a + rng.int(0, 200)) : rng.int(a, n);
      const acc = { min: Infinity, max: -Infinity };
      rangeMinMax(raw, levels, a, b, acc);
      let lo = Infinity;
      let hi = -Infinity;
      for (let i = a; i < b; i++) {
        lo = Math.min(lo, v[i]);
        hi = Math.max(hi, v[i]);
      }
      expect([acc.min, acc.max]).toEqual([lo, hi]);
    }
  });
});
