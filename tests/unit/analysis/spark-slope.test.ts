/**
 * The spark line's slope, level and burn time on a third, physics-built model
 * (tests/generators/spark-line.ts; issue 11: numbers right on captures the product has never seen):
 * a raised-cosine firing line (10–90 % rise 2 µs), an exponential collapse (2 µs) into a spark line
 * S(t) = Vs0 + (Vs1 − Vs0)·(t − t_apex)/burn plus turbulence (Gaussian noise low-passed by a 20 µs
 * moving average, RMS 5 % of the mean spark level), then the coil's damped ringing joined to the
 * line's last voltage within 0.7 µs; white noise 0.05 kV; optionally a dwell-start wobble. Values in
 * kV at the plug. Truth from the parameters: slope = (Vs1 − Vs0)/burn, level = (Vs0 + Vs1)/2.
 *
 * How close a slope can be read: a least-squares line over a spark line of length T whose
 * turbulence σ is correlated over τc has a slope error of about σ·√(12·τc/T³) (the variance of a
 * least-squares slope, with T/τc independent values; a standard result of regression, from memory):
 * 1.5 kV, σ = 0.075 kV, τc = 20 µs, T = 1.5 ms → 0.02 kV/ms. The tolerance asked, ±(0.08 kV/ms +
 * 15 %), is then four to five of those errors on the lines held per event below.
 */
import { describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import type { SecondaryResult } from "../../../shared/analysis/types";
import { generateSparkLine, type SparkLineOptions } from "../../generators/spark-line";

const RATES = [1e6, 2e6, 5e6];
const SEEDS = [1, 2, 3];

/** ±(0.08 kV/ms + 15 %) of the true slope (the tolerance issue 11's outside check asks) */
const slopeTol = (truth: number) => 0.08 + 0.15 * Math.abs(truth);

function analyse(opts: SparkLineOptions) {
  const g = generateSparkLine(opts);
  const r = analyzeTrace(g.trace) as SecondaryResult;
  return { g, r };
}

describe("spark line slope on a physics-built spark line (issue 11)", () => {
  const variants: [string, SparkLineOptions][] = [
    // 1.4 → 1.65 kV over 1.5 ms = 0.167 kV/ms: a rising line (common practice, no source)
    ["rising 1.4 → 1.65 kV over 1.5 ms, dwell wobble 10 % 4 ms before", { wobbleFrac: 0.1, dwellMs: 4 }],
    ["flat 1.5 kV over 1.5 ms", { sparkStartKv: 1.5, sparkEndKv: 1.5 }],
    ["falling 1.8 → 1.5 kV over 2 ms", { sparkStartKv: 1.8, sparkEndKv: 1.5, burnMs: 2 }],
    [
      "inverted, baseline 0.3 kV, rising 1.2 → 1.6 kV over 2 ms",
      { polarity: -1, baselineKv: 0.3, sparkStartKv: 1.2, sparkEndKv: 1.6, burnMs: 2 },
    ],
    // a 1 ms line at 1 kV: σ = 0.05 kV, error ≈ 0.05·√(12·0.02/1) ≈ 0.024 kV/ms
    ["short 0.9 → 1.1 kV over 1 ms", { sparkStartKv: 0.9, sparkEndKv: 1.1, burnMs: 1, rpm: 2500 }],
    [
      "dwell wobble 15 % 2 ms before, 1.4 → 1.6 kV over 1.2 ms",
      { wobbleFrac: 0.15, dwellMs: 2, sparkStartKv: 1.4, sparkEndKv: 1.6, burnMs: 1.2 },
    ],
    ["ringing swinging toward the baseline first (A_r −1.5 kV), 7 kHz", { ringKv: -1.5, ringHz: 7e3 }],
    ["a large extinction step up (A_r 3 kV), 2.5 kHz, 3 peaks", { ringKv: 3, ringHz: 2.5e3, ringPeaks: 3 }],
  ];
  const cases = variants.flatMap(([name, v]) => RATES.map((rate) => [name, rate, v] as const));

  it.each(cases)("%s at %i S/s: slope, level and burn time of every event", (_name, rate, v) => {
    for (const seed of SEEDS) {
      const { g, r } = analyse({ seed, sampleRateHz: rate, ...v });
      expect(r.unit).toBe("kV");
      expect(r.summary.polarity).toBe((v.polarity ?? 1) > 0 ? "positive" : "negative");
      expect(r.events.length).toBe(g.truth.events.length);
      r.events.forEach((e, k) => {
        const t = g.truth.events[k];
        const at = `seed ${seed} event ${k}`;
        expect(Math.abs(e.timeS - t.timeS), `${at} apex`).toBeLessThan(5e-6);
        // burn time within 5 % and the level within 5 % (the existing tolerances, secondary.test.ts)
        expect(Math.abs(e.burnTimeMs - t.burnMs), `${at} burn ${e.burnTimeMs}`).toBeLessThan(0.05 * t.burnMs);
        expect(Math.abs(e.burnLevel - t.levelKv), `${at} level ${e.burnLevel}`).toBeLessThan(0.05 * t.levelKv);
        expect(e.sparkSlope, `${at} slope`).not.toBeNull();
        const err = Math.abs(e.sparkSlope! - t.slopeKvPerMs);
        expect(err, `${at} slope ${e.sparkSlope} vs ${t.slopeKvPerMs}`).toBeLessThan(slopeTol(t.slopeKvPerMs));
        // the placement-free slope, % of the level per ms, follows from the same two truths
        const pct = (100 * t.slopeKvPerMs) / t.levelKv;
        expect(Math.abs(e.sparkSlopePctPerMs! - pct)).toBeLessThan((100 * slopeTol(t.slopeKvPerMs)) / t.levelKv);
      });
    }
  });

  it("at 6000 rpm (0.8 ms burn, 2.3 kV line rising 0.25 kV/ms) the capture's median slope holds", () => {
    // per event the statistical error is 0.115·√(12·0.02/0.8³) ≈ 0.08 kV/ms — as large as the tolerance —
    // so a single short line cannot be held to it; the median of eight lines can (≈ 0.035 kV/ms)
    for (const seed of SEEDS) {
      for (const rate of [1e6, 2e6]) {
        const { g, r } = analyse({
          seed,
          sampleRateHz: rate,
          rpm: 6000,
          events: 8,
          burnMs: 0.8,
          sparkStartKv: 2.2,
          sparkEndKv: 2.4,
          firingKv: 13,
          wobbleFrac: 0.1,
          dwellMs: 2,
        });
        expect(r.events.length).toBe(8);
        expect(Math.abs(r.summary.rpm! - 6000)).toBeLessThan(0.02 * 6000); // apexes jittered by up to 0.2 ms
        const truth = g.truth.events[0].slopeKvPerMs; // 0.2 kV / 0.8 ms = 0.25 kV/ms
        expect(Math.abs(r.summary.sparkSlope.median! - truth), `seed ${seed} ${rate} S/s`).toBeLessThan(
          slopeTol(truth),
        );
        for (const e of r.events) expect(Math.abs(e.burnTimeMs - 0.8)).toBeLessThan(0.05 * 0.8);
      }
    }
  });

  it("reads as close as a least-squares line through the whole settled line can (1.2 ms lines, 120 of them)", () => {
    // 1.4 → 1.6 kV over 1.2 ms (0.167 kV/ms). The slope error of a least-squares line through the
    // whole line is σ·√(12·τc/T³) = 0.075·√(12·0.02/1.2³) ≈ 0.028 kV/ms (see the head of this file);
    // a fit through only part of the line is worse as (part)^(−3/2): its middle 80 % gives ≈ 0.039.
    const ideal = 0.075 * Math.sqrt((12 * 0.02) / 1.2 ** 3);
    const errs: number[] = [];
    for (let seed = 100; seed < 140; seed++) {
      const { g, r } = analyse({ seed, sampleRateHz: 2e6, sparkStartKv: 1.4, sparkEndKv: 1.6, burnMs: 1.2 });
      expect(r.events.length).toBe(3);
      r.events.forEach((e, k) => errs.push(e.sparkSlope! - g.truth.events[k].slopeKvPerMs));
    }
    const mean = errs.reduce((s, x) => s + x, 0) / errs.length;
    const rms = Math.sqrt(errs.reduce((s, x) => s + x * x, 0) / errs.length);
    // no bias beyond three standard errors of the mean, and a scatter within 20 % of the ideal
    expect(Math.abs(mean), `mean error ${mean}`).toBeLessThan((3 * ideal) / Math.sqrt(errs.length));
    expect(rms, `rms error ${rms} vs ${ideal}`).toBeLessThan(1.2 * ideal);
  });
});
