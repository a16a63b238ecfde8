import { describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import { compareEvents, compareTraces } from "../../../shared/analysis/compare";
import type { AnalysisResult } from "../../../shared/analysis/types";
import { generateInjector, type InjectorOptions } from "../../../demo/generators/injector";
import { generateSecondary, type SecondaryFault } from "../../../demo/generators/secondary";

// Outliers by the modified z-score of Iglewicz & Hoaglin (1993): M = 0.6745·(x − median)/MAD, |M| > 3.5.

function secondarySet(size: number, seed: number, odd?: { index: number; fault: SecondaryFault }) {
  return Array.from({ length: size }, (_, i) => {
    const g = generateSecondary({
      seed: seed * 100 + i,
      sampleRateHz: 1e6,
      events: 2,
      rpm: 6000,
      fault: odd && odd.index === i ? odd.fault : "none",
    });
    return { file: `cyl${i + 1}.csv`, ...analyzeTrace(g.trace, { kvPerVolt: 10 }) };
  });
}

describe("comparison across cylinders (secondary ignition)", () => {
  it.each([1, 2, 3, 4])("healthy set %i: the medians side by side, nothing flagged", (seed) => {
    const results = secondarySet(seed % 2 ? 6 : 4, seed);
    const c = compareTraces(results);
    expect(c.outliers).toEqual([]);
    const peak = c.metrics.find((m) => m.metric === "peak")!;
    expect(peak.unit).toBe("kV");
    expect(peak.values.map((v) => v.file)).toEqual(results.map((r) => r.file));
    peak.values.forEach((v, i) =>
      expect(v.value).toBe((results[i].summary as { peak: { median: number } }).peak.median),
    );
    // issue 11: placement-free measures (firing line ÷ its spark line, slope relative to the level)
    // beside the absolute ones
    expect(c.metrics.map((m) => m.metric)).toEqual([
      "peak",
      "burnTimeMs",
      "burnLevel",
      "oscillations",
      "dwellMs",
      "firingToSpark",
      "sparkSlopePctPerMs",
    ]);
    expect(c.statements).toEqual([]);
  });

  // what each fault does to the cylinder (public study material, from the trade reference):
  // high firing line + short burn: wide gap; low firing line + long burn: fouled plug;
  // missing ringing: shorted turns (from memory); a coil breaking down fires low and short
  it.each([
    [
      "wide-gap",
      [
        ["peak", 1],
        ["burnTimeMs", -1],
      ],
    ],
    [
      "fouled-plug",
      [
        ["peak", -1],
        ["burnTimeMs", 1],
      ],
    ],
    ["shorted-turns", [["oscillations", -1]]],
    [
      "coil-breakdown",
      [
        ["peak", -1],
        ["burnTimeMs", -1],
      ],
    ],
  ] as const)("the cylinder with a %s is the odd one out, and only it", (fault, expected) => {
    for (const [seed, size, index] of [
      [11, 4, 2],
      [12, 6, 0],
    ] as const) {
      const results = secondarySet(size, seed, { index, fault });
      const c = compareTraces(results);
      expect(c.outliers.length).toBeGreaterThan(0);
      for (const o of c.outliers) expect(o.file).toBe(`cyl${index + 1}.csv`);
      for (const [metric, dir] of expected) {
        const o = c.outliers.find((x) => x.metric === metric);
        expect(o, `${fault}: ${metric} flagged in set ${seed}`).toBeDefined();
        expect(Math.sign(o!.score)).toBe(dir);
        expect(Math.abs(o!.score)).toBeGreaterThan(3.5);
        expect(Math.sign(o!.value - o!.median)).toBe(dir);
      }
    }
  });

  it("labels outliers by traceId when the results carry one (the server's form)", () => {
    const results = secondarySet(4, 21, { index: 1, fault: "wide-gap" }).map((r, i) => ({
      ...r,
      file: undefined,
      traceId: `t${i}`,
    }));
    const c = compareTraces(results);
    expect(c.outliers.every((o) => o.traceId === "t1" && o.file === undefined)).toBe(true);
  });

  it("event to event: an erratic event stands out within one trace", () => {
    const g = generateSecondary({ seed: 22, sampleRateHz: 1e6, events: 6, rpm: 3000, jitter: { peak: 0.01 } });
    const r = analyzeTrace(g.trace) as AnalysisResult;
    expect(compareEvents(r)).toEqual([]);
    const ev = r.events as { peak: number }[];
    ev[3].peak *= 1.6; // one event's firing line much higher
    const out = compareEvents(r);
    expect(out.map((o) => [o.event, o.metric])).toEqual([[3, "peak"]]);
  });
});

describe("comparison across injectors", () => {
  const set = (odd?: { index: number; sticking: InjectorOptions["sticking"] }) =>
    Array.from({ length: 4 }, (_, i) => {
      const g = generateInjector({
        seed: 300 + i,
        sampleRateHz: 500e3,
        rpm: 2000,
        sticking: odd && odd.index === i ? odd.sticking : "none",
      });
      return { file: `inj${i + 1}.csv`, ...analyzeTrace(g.trace, {}, { kind: "injector" }) };
    });

  it("healthy injectors: nothing flagged", () => {
    const c = compareTraces(set());
    expect(c.outliers).toEqual([]);
    expect(c.metrics.map((m) => m.metric)).toEqual(["pulseWidthMs", "turnOffPeak", "humpDelayMs"]);
  });

  it("a sticking injector that closes late is the odd one out", () => {
    const c = compareTraces(set({ index: 2, sticking: "late" }));
    expect(c.outliers.map((o) => [o.file, o.metric])).toEqual([["inj3.csv", "humpDelayMs"]]);
    expect(c.outliers[0].score).toBeGreaterThan(3.5);
  });

  it("a sticking injector with no hump is named by its own finding", () => {
    const results = set({ index: 0, sticking: "absent" });
    const flagged = results.filter((r) => r.findings.some((f) => f.code === "no-pintle-hump")).map((r) => r.file);
    expect(flagged).toEqual(["inj1.csv"]);
    expect(compareTraces(results).outliers).toEqual([]);
  });
});
