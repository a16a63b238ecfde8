import { describe, expect, it } from "vitest";
import {
  bucketBoundaries,
  bucketEdge,
  bucketOf,
  checkWindow,
  decimateMinMax,
  MAX_DECIMATE_WIDTH,
  traceBoundaries,
} from "../../../shared/trace/decimate";
import { MAX_WINDOW_WIDTH, traceWindowQuerySchema } from "../../../shared/schemas/traces";
import { buildPyramid, rangeMinMax, ArrayScanner, pyramidBlockSizes } from "../../../shared/trace/pyramid";
import type { ParsedTrace } from "../../../shared/trace/types";
import { bruteForceWindow } from "./reference";
import { createRng, randomTrace, randomWindow } from "./helpers";

function ramp(n: number, rate: number): ParsedTrace {
  const values = Float32Array.from({ length: n }, (_, i) => i);
  return {
    samples: n,
    sampleRateHz: rate,
    t0: 0,
    durationS: n / rate,
    time: null,
    channels: [{ name: "A", unit: "V", values, min: 0, max: n - 1 }],
    warnings: [],
  };
}

// Sources: the window contract of issue 3 (`GET /api/traces/:id/window`: "bucket k covers its share
// of [t0, t1]; min/max are that bucket's extremes"), made exact in shared/trace/decimate.ts; the
// expected buckets of the worked examples are written by hand from that definition (arithmetic).

describe("decimateMinMax", () => {
  it("worked example: a ramp 0…9 at 1 Hz over [0, 10) in 5 buckets", () => {
    // by hand: bucket k covers [2k, 2k + 2) → samples 2k and 2k + 1
    const w = decimateMinMax(ramp(10, 1), 0, 10, 5);
    expect(w.t).toEqual([0, 2, 4, 6, 8]);
    expect(w.series).toEqual([{ name: "A", min: [0, 2, 4, 6, 8], max: [1, 3, 5, 7, 9] }]);
  });

  it("worked example at 1 MS/s: [100 µs, 200 µs) in 10 buckets of 10 µs holds 10 samples each", () => {
    // By hand: sample i is at i µs (1 MS/s, micro = 1e-6, BIPM SI Brochure Table 7); bucket k covers
    // [100 + 10k, 110 + 10k) µs, so it holds samples 100 + 10k … 109 + 10k of the ramp (value = i).
    // Samples 110, 120, 130, 140, 150 lie exactly on an edge; in floating point 110/1e6 < (110e-6
    // computed as an edge) for some of them, and the former floor formula put them a bucket early.
    const trace = ramp(1000, 1e6);
    const expected = {
      min: [100, 110, 120, 130, 140, 150, 160, 170, 180, 190],
      max: [109, 119, 129, 139, 149, 159, 169, 179, 189, 199],
    };
    const w = decimateMinMax(trace, 100e-6, 200e-6, 10);
    expect(w.series).toEqual([{ name: "A", ...expected }]);
    // bucket starts 100, 110, … 190 µs (to the nanosecond; the exact values are edge(k) = t0 + k·span/width)
    expect(w.t.map((t) => Math.round(t * 1e9))).toEqual(
      [100, 110, 120, 130, 140, 150, 160, 170, 180, 190].map((us) => us * 1000),
    );
    expect(w.t).toEqual(Array.from({ length: 10 }, (_, k) => bucketEdge(100e-6, 200e-6, 10, k)));
    // the same with every sample's time given (the time-array path)
    const uneven: ParsedTrace = { ...trace, time: Float64Array.from({ length: 1000 }, (_, i) => i / 1e6) };
    expect(decimateMinMax(uneven, 100e-6, 200e-6, 10).series).toEqual([{ name: "A", ...expected }]);
    // the independent reference agrees with the hand-written buckets
    expect(bruteForceWindow(trace, 100e-6, 200e-6, 10).series).toEqual([{ name: "A", ...expected }]);
  });

  it("worked example at 1 MS/s: [0, 1 ms) in 100 buckets puts exactly 10 samples in each", () => {
    // By hand: bucket k covers [10k, 10k + 10) µs → samples 10k … 10k + 9 (ramp value = i).
    // The former floor formula misplaced 18 of these 1000 samples (computed below, as a check that
    // this example is sensitive to the rounding at the edges).
    const trace = ramp(1000, 1e6);
    const floorMisplaced = Array.from(
      { length: 1000 },
      (_, i) => Math.floor((i / 1e6 / 1e-3) * 100) !== Math.floor(i / 10),
    ).filter(Boolean).length;
    expect(floorMisplaced).toBe(18);
    const min = Array.from({ length: 100 }, (_, k) => 10 * k);
    const max = min.map((m) => m + 9);
    for (const t of [trace, { ...trace, time: Float64Array.from({ length: 1000 }, (_, i) => i / 1e6) }]) {
      const w = decimateMinMax(t, 0, 1e-3, 100);
      expect(w.t).toHaveLength(100);
      expect(w.series[0].min).toEqual(min);
      expect(w.series[0].max).toEqual(max);
    }
  });

  it("bucketOf, the boundaries and the labels agree for every sample", () => {
    // Definition (shared/trace/decimate.ts): sample i is in bucket k ⇔ i ∈ [b[k], b[k+1]) ⇔ bucketOf(tᵢ) = k.
    for (const [rate, t0, t1, width] of [
      [1e6, 100e-6, 200e-6, 10],
      [1e6, 0, 1e-3, 100],
      [44_100, 0.01, 0.02, 441],
      [2.5e7, 1e-5, 3e-5, 500],
    ] as const) {
      const trace = ramp(Math.ceil(t1 * rate) + 10, rate);
      const b = traceBoundaries(trace, t0, t1, width);
      const bSearch = bucketBoundaries(trace.samples, (i) => i / rate, t0, t1, width);
      expect(Array.from(b)).toEqual(Array.from(bSearch));
      for (let k = 0; k < width; k++) {
        for (let i = b[k]; i < b[k + 1]; i++) expect(bucketOf(i / rate, t0, t1, width)).toBe(k);
      }
      // before and after the window (bucketOf's contract: −1 and width)
      if (b[0] > 0) expect(bucketOf((b[0] - 1) / rate, t0, t1, width)).toBe(-1);
      expect(bucketOf(b[width] / rate, t0, t1, width)).toBe(width);
    }
  });

  it("worked example: a window partly outside the trace leaves out the empty buckets", () => {
    // by hand: [-4, 6) in 5 buckets of 2 s: buckets 0, 1 (before the trace) are empty; bucket 2 = [0, 2)
    const w = decimateMinMax(ramp(10, 1), -4, 6, 5);
    expect(w.t).toEqual([0, 2, 4]);
    expect(w.series[0].min).toEqual([0, 2, 4]);
    expect(w.series[0].max).toEqual([1, 3, 5]);
    // by hand: [20, 30) lies entirely after the 10 s trace: nothing
    expect(decimateMinMax(ramp(10, 1), 20, 30, 4)).toEqual({ t: [], series: [{ name: "A", min: [], max: [] }] });
  });

  it("more buckets than samples: one sample per non-empty bucket", () => {
    // by hand: [0, 4) in 40 buckets of 0.1 s; samples at 0, 1, 2, 3 s start buckets 0, 10, 20, 30
    const w = decimateMinMax(ramp(4, 1), 0, 4, 40);
    expect(w.t).toEqual([0, 1, 2, 3]);
    expect(w.series[0].min).toEqual([0, 1, 2, 3]);
    expect(w.series[0].max).toEqual([0, 1, 2, 3]);
  });

  it("matches the brute-force reference on random traces, windows and widths (with and without pyramid)", () => {
    // Reference: tests/unit/trace/reference.ts, which decides membership by comparing each sample's
    // time with the edges (no shared code with the implementation).
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

  it("matches the reference on windows whose edges fall on samples (uniform and time-array traces)", () => {
    // Reference: tests/unit/trace/reference.ts. Windows start and end on sample times and split
    // into buckets of whole samples, so many samples lie exactly on an edge (arithmetic).
    const rng = createRng(4242);
    for (let trial = 0; trial < 40; trial++) {
      const rate = rng.pick([1000, 44_100, 1e6, 2.5e7]);
      const n = rng.int(200, 5000);
      const base = ramp(n, rate);
      const trace = trial % 2 ? { ...base, time: Float64Array.from({ length: n }, (_, i) => i / rate) } : base;
      const per = rng.int(1, 20);
      const width = rng.int(1, Math.floor(n / per));
      const first = rng.int(0, n - per * width);
      const [t0, t1] = [first / rate, (first + per * width) / rate];
      const w = decimateMinMax(trace, t0, t1, width);
      expect(w).toEqual(bruteForceWindow(trace, t0, t1, width));
      // by hand: bucket k holds samples first + per·k … first + per·k + per − 1
      expect(w.series[0].min).toEqual(Array.from({ length: width }, (_, k) => first + per * k));
      expect(w.series[0].max).toEqual(Array.from({ length: width }, (_, k) => first + per * k + per - 1));
    }
  });

  it("rejects nonsense windows", () => {
    // Definition of a window (shared/trace/decimate.ts): finite t0 < t1, a whole number of buckets ≥ 1.
    expect(() => checkWindow(1, 1, 10)).toThrow(RangeError);
    expect(() => checkWindow(0, Number.NaN, 10)).toThrow(RangeError);
    expect(() => checkWindow(0, 1, 0)).toThrow(RangeError);
    expect(() => checkWindow(0, 1, 2.5)).toThrow(RangeError);
  });

  it("one name per width limit: the computation's (MAX_DECIMATE_WIDTH) and the endpoint's (MAX_WINDOW_WIDTH)", () => {
    // Project rule: the endpoint asks for at most MAX_WINDOW_WIDTH buckets (about two points per
    // pixel of a wide screen, issue 3), which the computation must accept.
    expect(MAX_WINDOW_WIDTH).toBeLessThanOrEqual(MAX_DECIMATE_WIDTH);
    expect(() => checkWindow(0, 1, MAX_DECIMATE_WIDTH)).not.toThrow();
    expect(() => checkWindow(0, 1, MAX_DECIMATE_WIDTH + 1)).toThrow(RangeError);
    expect(traceWindowQuerySchema.safeParse({ width: String(MAX_WINDOW_WIDTH) }).success).toBe(true);
    expect(traceWindowQuerySchema.safeParse({ width: String(MAX_WINDOW_WIDTH + 1) }).success).toBe(false);
  });
});

describe("min/max pyramid", () => {
  it("range extremes equal a plain scan for random ranges, across all levels", () => {
    // Reference: a plain scan of every sample in [a, b) (the definition of min and max).
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
