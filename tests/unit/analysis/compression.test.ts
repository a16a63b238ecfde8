import { describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import { ENGINE_SAFETY } from "../../../shared/analysis/findings";
import type { CompressionResult } from "../../../shared/analysis/types";
import { parseTraceText } from "../../../shared/trace/parse";
import { generateCompression, type CompressionOptions } from "../../../demo/generators/compression";
import { renderCsv } from "../../../demo/generators/csv";

function run(opts: CompressionOptions, given = true) {
  const g = generateCompression(opts);
  const settings = { mvPerAmp: opts.mvPerAmp, ...(given ? { cylinders: g.truth.cylinders } : {}) };
  const r = analyzeTrace(g.trace, settings, { kind: "relative-compression" }) as CompressionResult;
  return { g, r };
}

/** every measured stroke is one of the generated strokes (within a third of a stroke period) */
function matchStrokes(g: ReturnType<typeof generateCompression>, r: CompressionResult) {
  const P = g.truth.strokePeriodS;
  return r.events.map((e) => {
    const t = g.truth.strokes.reduce((a, b) => (Math.abs(b.timeS - e.timeS) < Math.abs(a.timeS - e.timeS) ? b : a));
    expect(Math.abs(t.timeS - e.timeS), `stroke at ${e.timeS}`).toBeLessThan(P / 3);
    return t;
  });
}

describe("relative compression from starter current", () => {
  it.each([
    ["4 cylinders, healthy", { seed: 1 }],
    ["6 cylinders, healthy, clamp in volts (1 mV/A)", { seed: 2, cylinders: 6, mvPerAmp: 1 }],
    ["8 cylinders, healthy, no inrush", { seed: 3, cylinders: 8, inrush: false }],
    ["3 cylinders, healthy, 250 rpm", { seed: 4, cylinders: 3, crankingRpm: 250 }],
  ] as const)("%s: every stroke found, nothing flagged", (_n, opts) => {
    const { g, r } = run(opts);
    matchStrokes(g, r);
    // all strokes after the inrush are measured (the last one may be cut off by the capture's end)
    const after = g.truth.strokes.filter((s) => s.timeS > 0.35 && s.timeS + g.truth.strokePeriodS / 2 <= 1.6);
    expect(r.summary.eventCount).toBeGreaterThanOrEqual(after.length);
    expect(r.summary.lowPositions).toEqual([]);
    expect(r.findings.map((f) => f.code)).toEqual([]);
    expect(r.summary.relativePct.min!).toBeGreaterThan(90);
    expect(r.unit).toBe("A");
  });

  it.each([
    ["4 cylinders, position 3 at 70 %", { seed: 11, lowPosition: 3 }],
    ["4 cylinders, position 1 at 80 %", { seed: 12, lowPosition: 1, lowFactor: 0.8 }],
    ["6 cylinders, position 5 at 65 %", { seed: 13, cylinders: 6, lowPosition: 5, lowFactor: 0.65 }],
    ["8 cylinders, position 2 dead", { seed: 14, cylinders: 8, lowPosition: 2, lowFactor: 0 }],
    ["3 cylinders, position 2 at 70 %, clamp in volts", { seed: 15, cylinders: 3, lowPosition: 2, mvPerAmp: 10 }],
  ] as const)("%s: the low cylinder's strokes, and only them, are flagged", (_n, opts) => {
    const { g, r } = run(opts);
    const truths = matchStrokes(g, r);
    // a stroke below ~85–90 % of the highest is suspect (common practice, no source)
    const flaggedPositions = new Set(r.summary.lowPositions);
    r.events.forEach((e, k) => {
      expect(flaggedPositions.has(e.position), `stroke at ${e.timeS.toFixed(3)}`).toBe(truths[k].low);
      // a stroke still riding on the inrush is kept and counted but marked as not judged (issue 11:
      // the first stroke after the inrush is no longer dropped); the others within 5 points
      if (!e.onInrush) expect(Math.abs(e.relativePct - truths[k].relativePct)).toBeLessThan(5);
    });
    expect(r.summary.lowPositions.length).toBe(1);
    const f = r.findings.filter((x) => x.code === "low-compression");
    expect(f.length).toBe(1);
    expect(f[0].advice).toContain(ENGINE_SAFETY);
  });

  it("the trade reference's V8 example disagrees with its own formula", () => {
    // cranking rpm = 120·f_peaks/N (trade reference). Its V8 example, "every 37.5 ms → 200 rpm",
    // does not follow from it: 120·(1/0.0375)/8 = 400 rpm; at 200 rpm a V8 peaks every 75 ms.
    expect((120 * (1 / 0.0375)) / 8).toBeCloseTo(400, 9);
    expect((120 * (1 / 0.075)) / 8).toBeCloseTo(200, 9);
  });

  it.each([
    // cranking rpm = 120·f_peaks/N (trade reference): 4 cylinders, peaks every 150 ms → 200 rpm
    [4, 200, 0.15],
    // V8 at 200 rpm by the same formula: every 75 ms
    [8, 200, 0.075],
    // V8 at 400 rpm: every 37.5 ms
    [8, 400, 0.0375],
  ] as const)("cranking rpm formula: %i cylinders at %i rpm, peaks every %s s", (N, rpm, period) => {
    expect((120 * (1 / period)) / N).toBeCloseTo(rpm, 9);
    const { g, r } = run({ seed: 20 + N, cylinders: N, crankingRpm: rpm });
    expect(g.truth.strokePeriodS).toBeCloseTo(period, 9);
    expect(Math.abs(r.summary.rpm! - rpm) / rpm).toBeLessThan(0.01);
    // cranking 150–250 rpm (trade reference): a plausible reading at the usual speed
    if (rpm === 200) {
      expect(r.summary.rpm!).toBeGreaterThanOrEqual(150);
      expect(r.summary.rpm!).toBeLessThanOrEqual(250);
    }
  });

  it("the inrush spike is ignored: the highest current is not a compression stroke", () => {
    const { g, r } = run({ seed: 30, inrushA: 700 });
    expect(r.summary.inrushIgnored).toBe(true);
    const tInrush = g.truth.inrushTimeS!;
    expect(r.events.every((e) => e.timeS > tInrush + 0.05)).toBe(true);
    expect(r.summary.peak.max!).toBeLessThan(120); // strokes rise ~80 A above the cranking current; the inrush is ~550 A
  });

  it("slow cranking is reported; the cylinder count is assumed (4) when not given", () => {
    const { r } = run({ seed: 31, crankingRpm: 120 }, false);
    const codes = r.findings.map((f) => f.code).sort();
    expect(codes).toEqual(["cylinders-assumed", "slow-cranking"]);
    expect(r.summary.cylinders).toBe(4);
    expect(Math.abs(r.summary.rpm! - 120) / 120).toBeLessThan(0.01);
  });

  it("reads the same through a CSV export (semicolons, decimal comma)", () => {
    const g = generateCompression({ seed: 32, lowPosition: 2 });
    const trace = parseTraceText(renderCsv(g.trace, { delimiter: ";", decimal: ",", valueUnit: "A" }));
    const r = analyzeTrace(trace, { cylinders: 4 }, { kind: "relative-compression" }) as CompressionResult;
    expect(r.unit).toBe("A");
    expect(r.summary.lowPositions.length).toBe(1);
    expect(Math.abs(r.summary.rpm! - 200)).toBeLessThan(2);
  });

  it("a flat current: no-events", () => {
    const g = generateCompression({ seed: 33, strokeA: 0, inrush: false });
    const r = analyzeTrace(g.trace, { cylinders: 4 }, { kind: "relative-compression" }) as CompressionResult;
    expect(r.findings.map((f) => f.code)).toEqual(["no-events"]);
    expect(r.summary.rpm).toBeNull();
  });
});

describe("strokes during the inrush: timed, counted and flagged, never the reference (issue 11)", () => {
  // Model (demo/generators/compression.ts): the inrush decays as (I_peak − I_c)·e^(−t/τ) with τ the
  // motor's spin-up time, here as long as a stroke period or longer (a V8 at 300 rpm strokes every
  // 120/(300·8) = 50 ms, trade reference formula), so the first strokes ride on hundreds of amperes
  // and show no peak of their own in the raw current. docs/api.md: a stroke that comes while the
  // inrush is still falling is timed and counted (`onInrush`), not used to judge compression.
  it.each([
    [8, 300, 0.06, 6],
    [8, 300, 0.09, 3],
    [6, 250, 0.1, 2],
    [4, 200, 0.16, 4],
  ] as const)("%i cylinders at %i rpm, inrush τ %s s, weak position %i", (N, rpm, tau, weak) => {
    for (const [seed, first] of [
      [41, 0.3],
      [42, 0.55],
    ]) {
      // the first stroke 0.3 or 0.55 of a period after key-on: deep in the inrush
      const { g, r } = run({
        seed,
        firstStroke: first,
        cylinders: N,
        crankingRpm: rpm,
        inrushTauS: tau,
        inrushA: 500,
        lowPosition: weak,
        durationS: 0.1 + (2.2 * 120) / rpm,
        // the commutator's ripple, 1 % of the cranking current
        commutatorA: 1.5,
      });
      const P = g.truth.strokePeriodS;
      const dur = g.trace.durationS;
      // every stroke whose fall is in the capture is found, the first one on the inrush included;
      // none whose peak is cut off (its fall less than a quarter period long)
      const full = g.truth.strokes.filter((s) => s.timeS + P / 2 <= dur).length;
      const some = g.truth.strokes.filter((s) => s.timeS + P / 4 <= dur).length;
      expect(r.summary.eventCount, `seed ${seed}`).toBeGreaterThanOrEqual(full);
      expect(r.summary.eventCount, `seed ${seed}`).toBeLessThanOrEqual(some);
      const typical = 80; // the model's healthy stroke, A
      r.events.forEach((e, k) => {
        const t = g.truth.strokes[k];
        expect(Math.abs(e.timeS - t.timeS), `stroke ${k} at ${t.timeS.toFixed(3)} s`).toBeLessThan(P / 5);
        // flagged while over a quarter of a stroke's rise of inrush is left (docs/api.md); not
        // asserted in the band around that line, where the tail's model decides
        if (t.inrushLeftA > 0.4 * typical) expect(e.onInrush, `stroke ${k}`).toBe(true);
        if (t.inrushLeftA < 0.1 * typical) expect(e.onInrush, `stroke ${k}`).toBe(false);
        // judged strokes: the model's factor as % of the strongest, within 5 points
        if (!e.onInrush) expect(Math.abs(e.relativePct - t.relativePct), `stroke ${k}`).toBeLessThan(5);
      });
      // one low position, the weak cylinder's, at ≈ 70 % (below ~85 %: common practice, no source)
      expect(r.summary.lowPositions).toEqual([weak]);
      expect(Math.abs(r.summary.positions[weak - 1].relativePct - 70)).toBeLessThan(5);
      // cranking rpm = 120·f_peaks/N (trade reference)
      expect(Math.abs(r.summary.rpm! - rpm) / rpm).toBeLessThan(0.02);
    }
  });
});
