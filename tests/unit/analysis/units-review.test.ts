/**
 * One unit model in the analysis (issue 11). The channel's units come from shared/trace/units.ts:
 * a capacitive pickup's scale multiplies volts at the scope into kV at the plug (common practice, no
 * source: pickups are specified in kV per volt); a file whose header states kV or A is not scaled
 * again; a clamp's mV/A divides volts into amperes (the clamp scale's definition). Settings
 * (volts/division, trigger level, ground offset) are in the scope's unit; every level in the result
 * is in the physical unit; advice gives the scope setting with the physical value beside it.
 * Captures: demo/generators/ignition.ts (see firing-events.test.ts for its model) and the injector
 * model of demo/generators/injector.ts. SI prefixes: BIPM SI Brochure (9th ed., 2019), table 7.
 */
import { describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import { SECONDARY_SAFETY } from "../../../shared/analysis/findings";
import type { AnalysisResult, InjectorResult, SecondaryResult } from "../../../shared/analysis/types";
import type { CaptureSettings } from "../../../shared/schemas/capture-settings";
import { generateIgnition } from "../../../demo/generators/ignition";
import { generateInjector } from "../../../demo/generators/injector";

const kvFile = generateIgnition({ seed: 21, events: 3, peakKv: 9, sampleRateHz: 1e6 });
const vFile = generateIgnition({ seed: 21, events: 3, peakKv: 9, sampleRateHz: 1e6, fileUnit: "V", kvPerVolt: 10 });
// the same captures recorded only up to the top of a screen (the scope keeps what its screen holds):
// 1 kV/div × 4 divisions = 4 kV; 0.2 V/div × 4 divisions = 0.8 V (8 kV through 10 kV/V)
const kvCut = generateIgnition({ seed: 21, events: 3, peakKv: 9, sampleRateHz: 1e6, clip: { high: 4 } });
const vCut = generateIgnition({
  seed: 21,
  events: 3,
  peakKv: 9,
  sampleRateHz: 1e6,
  fileUnit: "V",
  kvPerVolt: 10,
  clip: { high: 0.8 },
});
const mvFile = generateIgnition({ seed: 21, events: 3, peakKv: 9, sampleRateHz: 1e6, fileUnit: "mV", kvPerVolt: 10 });
const sec = (trace: typeof kvFile.trace, s: Partial<CaptureSettings>) => analyzeTrace(trace, s) as SecondaryResult;
const codes = (r: AnalysisResult) => r.findings.map((f) => f.code);
const text = (r: AnalysisResult) => r.findings.map((f) => `${f.message} ${f.advice}`).join(" ");

describe("the same capture in kV, in volts through 10 kV/V and in millivolts reads the same kV", () => {
  it("kV at the plug in every case; settings in the scope's unit", () => {
    const a = sec(kvFile.trace, { kvPerVolt: 10 });
    const b = sec(vFile.trace, { kvPerVolt: 10 });
    const c = sec(mvFile.trace, { kvPerVolt: 10 });
    expect([a.unit, b.unit, c.unit]).toEqual(["kV", "kV", "kV"]);
    expect([a.scopeUnit, b.scopeUnit, c.scopeUnit]).toEqual(["kV", "V", "V"]);
    // a header in kV is not scaled by the pickup again
    expect(a.unitNote).toMatch(/not applied again/);
    for (const r of [a, b, c])
      r.events.forEach((e, k) =>
        expect(Math.abs(e.peak - kvFile.truth.events[k].peakKv) / kvFile.truth.events[k].peakKv).toBeLessThan(0.02),
      );
  });
});

describe("a capture exported in kV: settings in kV (the issue's case)", () => {
  it("a 3 kV trigger on 9 kV firing lines is fine: no trigger finding", () => {
    const r = sec(kvFile.trace, { voltsPerDiv: 4, triggerLevel: 3 });
    expect(codes(r)).toEqual([]);
    // half the lowest firing line: about 4.5 kV, said in kV
    expect(r.suggestions.triggerLevel!).toBeGreaterThan(4);
    expect(r.suggestions.triggerLevel!).toBeLessThan(5);
    expect(r.suggestions.triggerText).toMatch(/^4\.\d+ kV$/);
  });

  it("a trigger of 0.01 kV sits in the noise and is said as 10 V (0.01 kV), never as 0.01 V", () => {
    const r = sec(kvFile.trace, { voltsPerDiv: 4, triggerLevel: 0.01 });
    expect(codes(r)).toEqual(["trigger-below-noise"]);
    expect(r.findings[0].message).toContain("(10 V)");
    expect(r.findings[0].advice).toMatch(/about 4\.\d+ kV/);
  });

  it("4 kV/div holds 9 kV firing lines (16 kV to the screen's top): not clipped", () => {
    expect(codes(sec(kvFile.trace, { voltsPerDiv: 4 }))).not.toContain("clipped");
  });

  it("1 kV/div cuts them at 4 kV (4 divisions above ground): clipped, the bound and the advice in kV", () => {
    const r = sec(kvCut.trace, { voltsPerDiv: 1 });
    const f = r.findings.find((x) => x.code === "clipped")!;
    const bound = Number(/above ([\d.]+) kV/.exec(f.message)![1]);
    expect(bound).toBeGreaterThan(3.9);
    expect(bound).toBeLessThanOrEqual(4);
    expect(f.advice).toMatch(/to \d+ kV\/div or more/);
    expect(f.advice).not.toMatch(/ V\/div/);
    expect(r.events.every((e) => e.clipped)).toBe(true);
  });
});

describe("volts at the scope through a pickup: scope volts with kV at the plug beside them", () => {
  it("clipping advice, trigger and framing say both", () => {
    const r = sec(vCut.trace, { kvPerVolt: 10, voltsPerDiv: 0.2, triggerLevel: 2 });
    const clip = r.findings.find((f) => f.code === "clipped")!;
    // 0.2 V/div × 4 divisions × 10 kV/V = 8 kV at the plug
    expect(clip.message).toMatch(/above 7\.9\d* kV/);
    expect(clip.advice).toContain("V/div on the scope (");
    expect(clip.advice).toContain("kV/div at the plug)");
    const trig = r.findings.find((f) => f.code === "trigger-above-signal")!;
    expect(trig.message).toContain("(2 V on the scope (20 kV at the plug))");
    // half the lowest firing line as recorded (cut at 8 kV here): about 4 kV
    expect(r.suggestions.triggerText).toMatch(/mV on the scope \(4(\.\d+)? kV at the plug\)$/);
    expect(r.suggestions.oneEvent!.text).toMatch(/V\/div on the scope \(\d+ kV\/div at the plug\)/);
  });
});

describe("other kinds use the same model", () => {
  it("an injector in volts: levels and advice in volts", () => {
    const g = generateInjector({ seed: 22, sampleRateHz: 1e6 });
    const r = analyzeTrace(g.trace, { voltsPerDiv: 20, triggerLevel: 200 }, { kind: "injector" }) as InjectorResult;
    expect(r.unit).toBe("V");
    expect(r.scopeUnit).toBe("V");
    const f = r.findings.find((x) => x.code === "trigger-above-signal")!;
    expect(f.message).toContain("(200 V)");
    expect(r.suggestions.triggerText).toMatch(/^\d+(\.\d+)? V$/);
  });
});

describe("plain words and one caution for the tech", () => {
  const results = [
    sec(kvFile.trace, { voltsPerDiv: 1, triggerLevel: 30, timePerDivS: 1e-5 }),
    sec(vFile.trace, { kvPerVolt: 10, voltsPerDiv: 0.05, triggerLevel: 0.0001 }),
    sec(generateIgnition({ seed: 23, events: 6, jitter: 0.4, polarity: -1, noiseKv: 0.3 }).trace, {}),
  ];
  it("no statistics words in any message or advice", () => {
    for (const r of results)
      expect(text(r)).not.toMatch(/MAD|modified z|z-score|M = |Baseline \/ noise|median absolute/i);
  });
  it("the safety caution once per trace, beside the first advice; findings worst first", () => {
    const order = { problem: 0, warning: 1, info: 2 } as const;
    for (const r of results) {
      expect(r.findings.length).toBeGreaterThan(1);
      expect(r.findings.filter((f) => f.advice.includes(SECONDARY_SAFETY)).length).toBe(1);
      expect(r.findings[0].advice).toContain(SECONDARY_SAFETY);
      for (let k = 1; k < r.findings.length; k++)
        expect(order[r.findings[k].severity]).toBeGreaterThanOrEqual(order[r.findings[k - 1].severity]);
    }
  });
});
