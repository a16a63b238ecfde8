/**
 * The firing line's tip is a cusp: the secondary's LC charge rises until the gap breaks down, then
 * the voltage collapses into the spark line within a microsecond or two (common practice, no
 * source). Model (demo/generators/ignition.ts, `tip: "breakdown"`): V_open·sin(ω(t − t0)) with a
 * quarter period of `riseUs`, cut at the breakdown voltage (V_open = reserve × breakdown; reserve 1:
 * the breakdown comes at the rise's top), then (V_b − spark line)·e^(−t/τ), τ = `fallUs`. Truth: the
 * breakdown voltage, exactly (the model's apex); white noise 0.02 kV at the plug.
 *
 * Expected (issue 11, outside check): the firing line is the event's largest excursion; the same
 * event read at 500 kS/s, 1, 2, 5 and 10 MS/s agrees within 2 % when the apex is resolved, and never
 * reads above the real peak by more than the noise (a parabola through a cusp overshoots both the
 * samples and the apex). A one-sample firing line at 1 MS/s (rise and collapse under a microsecond)
 * is a firing, not a glitch: a spark line follows it; a lone glitch that nothing follows is still
 * left out.
 */
import { describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import type { SecondaryResult } from "../../../shared/analysis/types";
import { generateIgnition, type IgnitionOptions } from "../../../demo/generators/ignition";

const RATES = [500e3, 1e6, 2e6, 5e6, 10e6];
const NOISE_KV = 0.02;

function read(opts: IgnitionOptions) {
  const g = generateIgnition({ seed: 21, events: 2, noiseKv: NOISE_KV, tip: "breakdown", ...opts });
  const r = analyzeTrace(g.trace, {}) as SecondaryResult;
  return { g, r };
}

describe("a breakdown tip (cusp) reads the same at any adequate rate, never above the real peak", () => {
  // reserve 1: the gap breaks down at the top of the LC rise (zero slope there). A sample δ before
  // the apex reads cos(πδ/(2·rise)) ≈ 1 − 1.23·(δ/rise)² of it: within 2 % for δ ≤ 2 µs (500 kS/s)
  // when the rise takes 20 µs or more, for δ ≤ 1 µs (1 MS/s) from 10 µs — the rates where the apex
  // is resolved. Phase: where the apex falls between the samples.
  const cases: [number, number, number][] = [];
  for (const rise of [10, 20, 30])
    for (const fall of [1, 3]) for (const phase of [0.3, 1.1, 1.7]) cases.push([rise, fall, phase]);
  it.each(cases)("rise %d µs, collapse τ %d µs, apex %s µs off the grid", (rise, fall, phase) => {
    const medians: number[] = [];
    for (const rate of RATES.filter((x) => x >= (rise >= 20 ? 500e3 : 1e6))) {
      const { g, r } = read({ riseUs: rise, fallUs: fall, apexOffsetUs: phase, sampleRateHz: rate, peakKv: 9 });
      expect(r.events.length).toBe(2);
      r.events.forEach((e, k) => {
        const truth = g.truth.events[k].peakKv;
        // never above the apex by more than the noise: the highest of the few samples near the top
        // stands up to about 3 noise RMS above them (common practice, no source)
        expect(e.peak, `${rate} S/s: ${e.peak} kV vs ${truth} kV`).toBeLessThanOrEqual(truth + 3 * NOISE_KV);
        // within 2 % of the apex (issue 11)
        expect(Math.abs(e.peak - truth) / truth, `${rate} S/s: ${e.peak} vs ${truth}`).toBeLessThan(0.02);
      });
      medians.push(r.summary.peak.median!);
    }
    // all rates within 2 % of each other (issue 11)
    expect((Math.max(...medians) - Math.min(...medians)) / Math.min(...medians)).toBeLessThan(0.02);
  });

  it("a breakdown on a steep rise (reserve 1.4): never above the apex; within 2 % at 5 and 10 MS/s", () => {
    for (const rate of RATES) {
      for (const phase of [0.2, 0.9, 1.5]) {
        const { g, r } = read({ riseUs: 15, fallUs: 1.5, reserve: 1.4, apexOffsetUs: phase, sampleRateHz: rate });
        expect(r.events.length).toBe(2);
        r.events.forEach((e, k) => {
          const truth = g.truth.events[k].peakKv;
          expect(e.peak).toBeLessThanOrEqual(truth + 3 * NOISE_KV);
          // the slope at breakdown is V_open·ω·cos = 14·(π/30 µs)·0.70 ≈ 1.0 kV/µs: a 0.1–0.2 µs sample
          // step misses at most 0.1–0.2 kV (1–2 %)
          if (rate >= 5e6) expect(Math.abs(e.peak - truth) / truth).toBeLessThan(0.02);
        });
      }
    }
  });
});

describe("a one-sample firing line at 1 MS/s is a firing, not a glitch", () => {
  it.each([
    // rise 0.6 µs, collapse τ 0.5 µs: the sample after the apex is at spark + (V_b − spark)·e^(−2)
    [0.6, 0.5, 9],
    [0.5, 0.3, 12],
  ])("rise %d µs, collapse τ %d µs, %d kV on a sample: read at its own height", (rise, fall, kv) => {
    const { g, r } = read({ riseUs: rise, fallUs: fall, peakKv: kv, sampleRateHz: 1e6 });
    expect(r.events.length).toBe(2);
    r.events.forEach((e, k) => {
      const truth = g.truth.events[k].peakKv;
      // on the grid the sample is the apex; within the noise (0.02 kV → 1 %)
      expect(Math.abs(e.peak - truth) / truth, `${e.peak} vs ${truth}`).toBeLessThan(0.01);
    });
  });

  it("a lone glitch that nothing follows is still left out at 1 MS/s (on the baseline and on the spark line)", () => {
    const clean = read({ riseUs: 8, fallUs: 4, tip: "rounded", sampleRateHz: 1e6 });
    const apex = clean.g.truth.events[0].timeS;
    const { g, r } = read({
      riseUs: 8,
      fallUs: 4,
      tip: "rounded",
      sampleRateHz: 1e6,
      glitches: [
        // 10 kV over the spark line 30 µs after the first apex (inside the apex search, 1.5 kV above the
        // 10 kV firing line), 16 kV on the baseline between the events
        { timeS: apex + 30e-6, kv: 10 },
        { timeS: apex + 20e-3, kv: 16 },
      ],
    });
    expect(r.events.length).toBe(2);
    r.events.forEach((e, k) => {
      const truth = g.truth.events[k].peakKv;
      expect(Math.abs(e.peak - truth) / truth).toBeLessThan(0.02);
    });
  });
});
