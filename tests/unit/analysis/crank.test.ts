import { describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import type { CrankResult } from "../../../shared/analysis/types";
import { parseTraceText } from "../../../shared/trace/parse";
import { generateCrank, type CrankOptions } from "../../../demo/generators/crank";
import { renderCsv } from "../../../demo/generators/csv";

const run = (opts: CrankOptions) => {
  const g = generateCrank(opts);
  return { g, r: analyzeTrace(g.trace, {}, { kind: "crank" }) as CrankResult };
};

describe("crank sensor on a 60-2 wheel", () => {
  it("the 60-2 formula: rpm = 1/T with T the tooth period in s; T = 1 ms → 1000 rpm (trade reference)", () => {
    // one revolution = 60 pitches of 6°: rpm = 60 / (60·T) = 1/T
    expect(60 / (60 * 1e-3)).toBe(1000);
    const { g, r } = run({ seed: 1, rpm: 1000 });
    expect(g.truth.toothPeriodS).toBeCloseTo(1e-3, 12);
    expect(Math.abs(r.summary.toothPeriodMs.median! - 1)).toBeLessThan(0.005);
    expect(Math.abs(r.summary.rpm! - 1000) / 1000).toBeLessThan(0.01);
  });

  it.each([
    [
      "cranking, 250 rpm with speed ripple",
      { seed: 2, rpm: 250, ripple: 0.15, rippleHz: 8, sampleRateHz: 50e3, revolutions: 2.2 },
    ],
    ["idle, 800 rpm", { seed: 3, rpm: 800 }],
    ["3000 rpm at 200 kS/s", { seed: 4, rpm: 3000, sampleRateHz: 200e3, revolutions: 3 }],
    ["6000 rpm at 500 kS/s", { seed: 5, rpm: 6000, sampleRateHz: 500e3, revolutions: 3 }],
    ["leads swapped, 1500 rpm", { seed: 6, rpm: 1500, polarity: -1 }],
    ["noisy, 1200 rpm", { seed: 7, rpm: 1200, noiseV: 0.15 }],
  ] as [string, CrankOptions][])("%s: gap every 58 teeth, rpm, no false findings", (_n, opts) => {
    const { g, r } = run(opts);
    const gaps = g.truth.gapTimesS;
    expect(r.summary.eventCount).toBe(gaps.length);
    r.events.forEach((e, k) => {
      expect(Math.abs(e.timeS - gaps[k])).toBeLessThan(0.2 * g.truth.toothPeriodS);
      // the gap is 3 pitches (18°) on a 60-2 wheel (trade reference)
      expect(Math.abs(e.gapRatio - 3)).toBeLessThan(opts.ripple ? 0.3 : 0.1);
      if (e.teeth != null) expect(e.teeth).toBe(58);
    });
    expect(Math.abs(r.summary.rpm! - g.truth.rpm) / g.truth.rpm).toBeLessThan(0.01);
    expect(r.summary.damagedTeeth).toEqual([]);
    expect(r.findings.map((f) => f.code)).toEqual(opts.polarity === -1 ? ["inverted"] : []);
  });

  it("a VR sensor's amplitude rises with speed (Faraday's law, v = N·dΦ/dt)", () => {
    const a = run({ seed: 8, rpm: 1000 }).r.summary;
    const b = run({ seed: 9, rpm: 2000, sampleRateHz: 200e3 }).r.summary;
    expect(Math.abs(b.amplitude.median! / a.amplitude.median! - 2)).toBeLessThan(0.1);
    expect(Math.abs(b.amplitudePerKrpm! / a.amplitudePerKrpm! - 1)).toBeLessThan(0.05);
    // within one capture whose speed changes, the slope of amplitude against rpm is positive
    const c = run({ seed: 10, rpm: 300, ripple: 0.25, rippleHz: 10, sampleRateHz: 50e3, revolutions: 2 }).r.summary;
    expect(c.amplitudeSlopePerKrpm!).toBeGreaterThan(0);
    expect(Math.abs(c.amplitudeSlopePerKrpm! / c.amplitudePerKrpm! - 1)).toBeLessThan(0.25);
  });

  it.each([
    ["a chipped inner tooth", { seed: 11, damagedTooth: 23 }],
    ["a tooth beside the gap", { seed: 12, damagedTooth: 58, rpm: 900 }],
    ["a tooth ground off (no flux)", { seed: 13, damagedTooth: 40, damagedFactor: 0, rpm: 1500, sampleRateHz: 200e3 }],
    ["a chipped tooth, leads swapped", { seed: 14, damagedTooth: 7, polarity: -1, rpm: 2000, sampleRateHz: 200e3 }],
  ] as [string, CrankOptions][])("%s is flagged by its number from the gap", (_n, opts) => {
    const { r } = run(opts);
    expect(r.summary.damagedTeeth).toEqual([opts.damagedTooth]);
    expect(r.findings.filter((f) => f.code === "damaged-tooth").length).toBe(1);
    expect(r.events.filter((e) => e.teeth != null).every((e) => e.teeth === 58)).toBe(true);
  });

  it("less than a revolution: no-gap; too few samples per tooth: undersampled", () => {
    expect(run({ seed: 15, revolutions: 0.7 }).r.findings.map((f) => f.code)).toEqual(["no-gap"]);
    const u = run({ seed: 16, rpm: 4000, sampleRateHz: 50e3 }).r;
    expect(u.findings.map((f) => f.code)).toContain("undersampled");
  });

  it("reads the same through a CSV export (no time column, rate from a metadata line)", () => {
    const g = generateCrank({ seed: 17, rpm: 1000 });
    const text = renderCsv(g.trace, { timeUnit: "none", preamble: ["Sample interval: 1e-5"] });
    const r = analyzeTrace(parseTraceText(text), {}, { kind: "crank" }) as CrankResult;
    expect(Math.abs(r.summary.rpm! - 1000)).toBeLessThan(5);
    expect(r.events.length).toBe(g.truth.gapTimesS.length);
  });
});
