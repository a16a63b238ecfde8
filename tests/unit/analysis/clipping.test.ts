/**
 * `clipped` from a saturated plateau (issue 11): a converter driven past its range repeats its
 * largest code, so a cut-off firing line shows a run of identical extreme values, with or without
 * volts/division known. A natural apex recorded by a coarse converter can also repeat its top code,
 * but it flattens into it; it is not clipping. Captures: demo/generators/ignition.ts (model in
 * firing-events.test.ts); the clipping is applied to the file's values, as a scope's converter
 * would; the 8-bit case rounds the values to 1/128 of a 12 kV half range (an 8-bit converter has
 * 256 codes: common practice, no source).
 */
import { describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import type { SecondaryResult } from "../../../shared/analysis/types";
import { makeTrace } from "../../../demo/generators/common";
import { generateIgnition, type IgnitionOptions } from "../../../demo/generators/ignition";

const run = (opts: IgnitionOptions, settings: Record<string, number> = {}) => {
  const g = generateIgnition(opts);
  return { g, r: analyzeTrace(g.trace, settings) as SecondaryResult };
};

describe("a firing line cut off at the converter's top code", () => {
  it.each([
    ["kV file cut at 7 kV, 10 MS/s", { fileUnit: "kV", clip: { high: 7 }, sampleRateHz: 10e6 }, {}],
    ["kV file cut at 8.5 kV, 500 kS/s", { fileUnit: "kV", clip: { high: 8.5 }, sampleRateHz: 500e3 }, {}],
    [
      "volts through 10 kV/V cut at 0.6 V, 2 MS/s",
      { fileUnit: "V", kvPerVolt: 10, clip: { high: 0.6 }, sampleRateHz: 2e6 },
      { kvPerVolt: 10 },
    ],
    [
      "inverted, cut at −0.75 V, 1 MS/s",
      { fileUnit: "V", kvPerVolt: 10, polarity: -1, clip: { low: -0.75 }, sampleRateHz: 1e6 },
      { kvPerVolt: 10 },
    ],
    [
      "kV file cut at 7 kV, volts/division given and large (plateau inside the screen)",
      { fileUnit: "kV", clip: { high: 7 }, sampleRateHz: 5e6 },
      { voltsPerDiv: 5 },
    ],
  ] as [string, IgnitionOptions, Record<string, number>][])(
    "%s: clipped, every event marked, the bound near the cut",
    (_n, opts, settings) => {
      const { g, r } = run({ seed: 31, events: 3, peakKv: 9.5, ...opts }, settings);
      expect(r.findings.map((f) => f.code)).toContain("clipped");
      expect(r.events.length).toBe(3);
      expect(r.events.every((e) => e.clipped)).toBe(true);
      // a lower bound: the reading never exceeds the truth, and sits at the cut
      const cutKv = Math.abs((opts.clip!.high ?? opts.clip!.low)!) / g.truth.fileScale;
      for (const e of r.events) {
        expect(e.peak).toBeLessThanOrEqual(9.5 * 1.01);
        expect(Math.abs(e.peak - cutKv) / cutKv).toBeLessThan(0.02);
      }
    },
  );

  it("an unclipped capture is not flagged, at any rate", () => {
    for (const rate of [500e3, 2e6, 10e6]) {
      const { r } = run({ seed: 32, events: 3, sampleRateHz: rate });
      expect(r.findings.map((f) => f.code)).not.toContain("clipped");
    }
  });

  it("an 8-bit capture whose apex repeats its top code is not clipping; the same capture cut at 7 kV is", () => {
    const q = 12 / 128; // kV per code
    const quantise = (v: Float32Array) => v.map((x) => Math.round(x / q) * q);
    for (const [clip, expected] of [
      [undefined, false],
      [7, true],
    ] as const) {
      const g = generateIgnition({
        seed: 33,
        events: 3,
        sampleRateHz: 10e6,
        noiseKv: 0.01,
        clip: clip ? { high: clip } : undefined,
      });
      const values = quantise(g.trace.channels[0].values);
      // the natural apex does repeat its top code on this grid
      let run = 0;
      let longest = 0;
      for (let i = 1; i < values.length; i++) {
        run = values[i] === values[i - 1] && values[i] > 5 ? run + 1 : 0;
        longest = Math.max(longest, run);
      }
      expect(longest).toBeGreaterThanOrEqual(3);
      const r = analyzeTrace(makeTrace(10e6, [{ name: "A", unit: "kV", values }])) as SecondaryResult;
      expect(r.findings.map((f) => f.code).includes("clipped")).toBe(expected);
    }
  });
});
