/**
 * Crank wheels with missing teeth. Model (demo/generators/crank.ts): N tooth positions 360°/N apart,
 * k missing at one place, so the gap spans k + 1 pitches and N − k teeth pass between two gaps; a
 * variable-reluctance sensor follows Faraday's law (v = −N·dΦ/dt: amplitude and frequency rise with
 * speed), a Hall sensor switches between two levels while a tooth is under it. One revolution is N
 * pitches: rpm = 60/(N·T) with T the tooth period, 1/T on a 60-tooth wheel (trade reference: T = 1 ms
 * → 1000 rpm on a 60-2 wheel). Patterns 60-2, 60-1, 36-2, 36-1, 24-1, 12-1: common practice, no
 * source.
 */
import { describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import type { CrankResult } from "../../../shared/analysis/types";
import { generateCrank, type CrankOptions } from "../../../demo/generators/crank";

const run = (opts: CrankOptions) => {
  const g = generateCrank(opts);
  return { g, r: analyzeTrace(g.trace, {}, { kind: "crank" }) as CrankResult };
};

const wheels = [
  [60, 2],
  [60, 1],
  [36, 2],
  [36, 1],
  [24, 1],
  [12, 1],
] as const;

describe("missing-tooth wheels are recognised from the gap's length against the pitch", () => {
  it.each(
    wheels.flatMap(([N, k]) =>
      (["vr", "hall"] as const).flatMap((sensor) => [300, 1000, 3000].map((rpm) => [N, k, sensor, rpm] as const)),
    ),
  )("%i-%i wheel, %s sensor, %i rpm", (N, k, sensor, rpm) => {
    // a sample rate that gives at least 40 samples per tooth, 2.5 revolutions
    const toothS = 60 / (N * rpm);
    const sampleRateHz = Math.max(50e3, Math.ceil(40 / toothS / 1e4) * 1e4);
    const { g, r } = run({ seed: N + k + rpm, rpm, positions: N, missing: k, sensor, sampleRateHz, revolutions: 2.5 });
    expect(r.summary.wheel).toEqual({
      pattern: `${N}-${k}`,
      positions: N,
      missing: k,
      teethPerRev: N - k,
      from: "revolution",
    });
    // the gap spans k + 1 pitches
    expect(Math.abs(r.summary.gapRatio.median! - (k + 1))).toBeLessThan(0.15);
    // the gaps where the model put them (the last tooth before each), within a fraction of a pitch
    expect(r.summary.gapTimesS.length).toBe(g.truth.gapTimesS.length);
    r.summary.gapTimesS.forEach((t, i) =>
      expect(Math.abs(t - g.truth.gapTimesS[i])).toBeLessThan((sensor === "hall" ? 0.5 : 0.2) * toothS),
    );
    for (const e of r.events) if (e.teeth != null) expect(e.teeth).toBe(N - k);
    // rpm: one revolution is N pitches (trade reference for 60-2: rpm = 1/T)
    expect(Math.abs(r.summary.rpm! - rpm) / rpm).toBeLessThan(0.01);
    expect(Math.abs(r.summary.toothPeriodMs.median! - toothS * 1e3) / (toothS * 1e3)).toBeLessThan(0.02);
    expect(r.findings.map((f) => f.code).filter((c) => c !== "undersampled")).toEqual([]);
  });

  it("T = 1 ms on a 60-2 wheel is 1000 rpm (trade reference); on a 36-1 wheel 60/(36·1 ms) = 1667 rpm", () => {
    expect(60 / (60 * 1e-3)).toBe(1000);
    const a = run({ seed: 1, rpm: 1000, positions: 60, missing: 2 }).r;
    expect(Math.abs(a.summary.toothPeriodMs.median! - 1)).toBeLessThan(0.01);
    expect(Math.abs(a.summary.rpm! - 1000)).toBeLessThan(10);
    const rpm36 = 60 / (36 * 1e-3);
    const b = run({ seed: 2, rpm: rpm36, positions: 36, missing: 1, sampleRateHz: 200e3 }).r;
    expect(Math.abs(b.summary.toothPeriodMs.median! - 1)).toBeLessThan(0.01);
    expect(Math.abs(b.summary.rpm! - rpm36) / rpm36).toBeLessThan(0.01);
  });

  it("a chipped tooth on a 36-1 wheel is still numbered from the gap", () => {
    const { r } = run({ seed: 3, rpm: 1200, positions: 36, missing: 1, damagedTooth: 20, sampleRateHz: 200e3 });
    expect(r.summary.wheel?.pattern).toBe("36-1");
    expect(r.summary.damagedTeeth).toEqual([20]);
  });

  /** the first seed whose capture holds exactly the gaps wanted (the wheel's start angle is random) */
  const seedWith = (
    opts: CrankOptions,
    gaps: number,
    check: (g: ReturnType<typeof generateCrank>) => boolean = () => true,
  ) => {
    for (let seed = 1; seed < 200; seed++) {
      const g = generateCrank({ ...opts, seed });
      if (g.truth.gapTimesS.length === gaps && check(g)) return seed;
    }
    throw new Error("no such seed");
  };

  it("one gap only in the capture: the pattern when the teeth beside it leave one common wheel", () => {
    // 1.1 revolutions of a 60-2 wheel with more than 34 teeth after the gap: a 36-2 wheel has only 34
    const opts = { rpm: 1000, revolutions: 1.1 };
    const seed = seedWith(opts, 1, (g) => g.truth.gapTimesS[0] < 0.2 * g.trace.durationS);
    const { r } = run({ ...opts, seed });
    expect(r.summary.eventCount).toBe(1);
    expect(r.summary.wheel).toMatchObject({ pattern: "60-2", from: "one-gap" });
    expect(Math.abs(r.summary.rpm! - 1000) / 1000).toBeLessThan(0.01);
  });

  it("one gap with too few teeth beside it to tell 60-2 from 36-2: not recognised, no rpm", () => {
    // 0.5 revolution of a 60-2 wheel with the gap in the middle: at most 30 teeth either side
    const opts = { rpm: 1000, revolutions: 0.5 };
    const seed = seedWith(opts, 1, (g) => Math.abs(g.truth.gapTimesS[0] / g.trace.durationS - 0.5) < 0.2);
    const { r } = run({ ...opts, seed });
    expect(r.summary.wheel).toBeNull();
    expect(r.summary.rpm).toBeNull();
    expect(r.findings.map((f) => f.code)).toEqual(["unknown-wheel"]);
  });

  it.each([
    [
      "a wheel with two gaps per revolution (36 positions, 2 missing twice)",
      { positions: 36, missingAt: [16, 17, 34, 35] },
    ],
    ["an uncommon 40-4 wheel", { positions: 40, missing: 4 }],
  ] as [string, CrankOptions][])("%s is not recognised: it says so and gives no rpm", (_n, wheel) => {
    const { r } = run({ seed: 5, rpm: 1000, sampleRateHz: 100e3, revolutions: 3, ...wheel });
    expect(r.summary.wheel).toBeNull();
    expect(r.summary.rpm).toBeNull();
    const f = r.findings.find((x) => x.code === "unknown-wheel")!;
    expect(f.severity).toBe("warning");
    expect(f.message).toMatch(/No rpm/);
  });

  it("less than a revolution with no gap: no-gap, and no rpm without the wheel's pattern", () => {
    const opts = { rpm: 1000, revolutions: 0.7 };
    const { r } = run({ ...opts, seed: seedWith(opts, 0) });
    expect(r.findings.map((f) => f.code)).toEqual(["no-gap"]);
    expect(r.summary.rpm).toBeNull();
  });
});

describe("a Hall sensor that switches within one sample, teeth and slots equally wide", () => {
  // The output is low in the slots and in the gap, so it rests on its low level (0 V) for more than
  // half the time: the teeth are its edges about the mid level, not crossings of 0 V. Tooth rates
  // from 90 to 6000 teeth a second; rates of 40 samples a tooth or more (20 kS/s at least).
  it.each([
    [12, 1, 600],
    [36, 1, 150],
    [60, 2, 800],
    [24, 1, 1500],
    [60, 1, 3000],
    [36, 2, 6000],
  ] as const)("%i-%i wheel at %i rpm", (N, k, rpm) => {
    const toothHz = (N * rpm) / 60;
    const sampleRateHz = Math.max(20e3, Math.min(500e3, Math.ceil((40 * toothHz) / 1e3) * 1e3));
    for (const seed of [1, 2, 3]) {
      const { g, r } = run({
        seed,
        rpm,
        positions: N,
        missing: k,
        sensor: "hall",
        hallDuty: 0.5,
        hallEdgeUs: 0,
        sampleRateHz,
        revolutions: 2.6,
      });
      // the wheel and its rpm: one revolution is N pitches (trade reference for 60-2: rpm = 1/T)
      expect(r.summary.wheel?.pattern, `seed ${seed}`).toBe(`${N}-${k}`);
      expect(Math.abs(r.summary.rpm! - rpm) / rpm).toBeLessThan(0.01);
      // N − k teeth between gaps; every tooth period one pitch, 60/(N·rpm)
      for (const e of r.events) if (e.teeth != null) expect(e.teeth).toBe(N - k);
      const pitchMs = (60 / (N * rpm)) * 1e3;
      expect(Math.abs(r.summary.toothPeriodMs.min! - pitchMs) / pitchMs).toBeLessThan(0.02);
      expect(r.summary.gapTimesS.length).toBe(g.truth.gapTimesS.length);
      // no spurious short tooth, no damaged tooth, no swapped leads on a clean signal
      expect(r.findings.map((f) => f.code).filter((c) => c !== "undersampled")).toEqual([]);
    }
  });
});
