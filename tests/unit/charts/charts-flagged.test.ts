import { describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import { compareTraces } from "../../../shared/analysis/compare";
import { SECONDARY_SAFETY } from "../../../shared/analysis/findings";
import type { AnalysisResult, Finding } from "../../../shared/analysis/types";
import { generateSecondary } from "../../../demo/generators/secondary";
import { generateCompression } from "../../../demo/generators/compression";
import { flaggedTraceId } from "../../../src/features/analysis/lib/flagged";
import { barLayout } from "../../../src/features/analysis/lib/bars";
import { comparisonCharts, shortLabel } from "../../../src/features/analysis/lib/chart-data";
import { withCautionsOnce } from "../../../src/features/analysis/lib/cautions";

// Four coils from the project's generator (demo/generators/secondary.ts): 1 MS/s, 3000 rpm, two
// firings each; burn 1.5 ms, and 0.75 ms on coil 3 (its stated parameter: half the others').
function coils(oddIndex: number | null) {
  return [0, 1, 2, 3].map((i) => {
    const g = generateSecondary({
      seed: 300 + i,
      sampleRateHz: 1e6,
      events: 2,
      rpm: 3000,
      burnTimeMs: i === oddIndex ? 0.75 : 1.5,
    });
    const burns = g.truth.events.map((e) => e.burnTimeMs).sort((a, b) => a - b);
    const truthBurnMs = (burns[(burns.length - 1) >> 1] + burns[burns.length >> 1]) / 2;
    return {
      id: `coil-${i + 1}`,
      label: `Cylinder ${i + 1}`,
      truthBurnMs,
      analysis: analyzeTrace(g.trace) as AnalysisResult,
    };
  });
}

describe("the flagged trace opens first", () => {
  it("is the comparison's odd one out (the generator's short-burn coil)", () => {
    const set = coils(2);
    const c = compareTraces(
      set.map((t) => ({ kind: t.analysis.kind, unit: t.analysis.unit, summary: t.analysis.summary, traceId: t.id })),
    );
    expect(flaggedTraceId(c, set)).toBe("coil-3");
  });

  it("else the first trace whose review found a problem; else none (the first trace opens)", () => {
    const set = coils(null);
    const c = compareTraces(
      set.map((t) => ({ kind: t.analysis.kind, unit: t.analysis.unit, summary: t.analysis.summary, traceId: t.id })),
    );
    expect(c.outliers).toEqual([]);
    expect(flaggedTraceId(c, set)).toBeUndefined();
    const problem: Finding = { code: "clipped", severity: "problem", message: "Clipped", advice: "" };
    const withProblem = set.map((t, i) =>
      i === 1 ? { ...t, analysis: { ...t.analysis, findings: [...t.analysis.findings, problem] } } : t,
    );
    expect(flaggedTraceId(c, withProblem)).toBe("coil-2");
  });
});

describe("cylinder-by-cylinder bars", () => {
  it("draw each coil's median burn, the odd coil flagged, burn time first", () => {
    const set = coils(2);
    const c = compareTraces(
      set.map((t) => ({ kind: t.analysis.kind, unit: t.analysis.unit, summary: t.analysis.summary, traceId: t.id })),
    );
    const charts = comparisonCharts(c, set, null);
    expect(charts[0].metric).toBe("burnTimeMs");
    expect(charts[0].unit).toBe("ms");
    expect(charts[0].items.map((i) => i.odd)).toEqual([false, false, true, false]);
    // the bars' values are the coils' median burn times: the generator's (1.5 ms, 0.75 ms on coil
    // 3, with its 1.5 % event-to-event jitter) within 5 % (the burn's end is read where the spark
    // line gives way to the ringing, a few samples either way)
    charts[0].items.forEach((it, i) =>
      expect(Math.abs(it.value! - set[i].truthBurnMs)).toBeLessThan(0.05 * set[i].truthBurnMs),
    );
    expect(charts[0].items[2].name).toBe("Cylinder 3");
    expect(shortLabel("Cylinder 3")).toBe("Cyl 3");
  });

  it("map values linearly from a zero baseline (plane geometry, hand-computed)", () => {
    // a box 200 px wide, top 20, bottom 120; values 50 and 100 of a 100 ceiling
    const l = barLayout(
      [
        { key: "a", label: "a", value: 50 },
        { key: "b", label: "b", value: 100 },
        { key: "c", label: "c", value: null },
      ],
      { left: 0, width: 300, top: 20, bottom: 120 },
      100,
    );
    expect(l.baseline).toBe(120);
    expect(l.bars[0]).toMatchObject({ y: 70, height: 50 });
    expect(l.bars[1]).toMatchObject({ y: 20, height: 100 });
    expect(l.bars[2].height).toBe(0);
    // equal slots of 100 px, bars 62 px wide centred in them
    expect(l.bars.map((b) => b.x)).toEqual([19, 119, 219]);
  });

  it("relative compression: the weak cylinder's bar, and only it, is below the 85 % line and coloured", () => {
    // generator: 4 cylinders, one of them (the third stroke after key-on) at 70 % (its stated low
    // factor); the analysis counts positions from the first stroke after the inrush
    const g = generateCompression({ seed: 9, lowPosition: 3, lowFactor: 0.7 });
    const r = analyzeTrace(g.trace, { kind: "relative-compression", cylinders: 4 }) as AnalysisResult & {
      kind: "relative-compression";
    };
    const l = barLayout(
      r.summary.positions.map((p) => ({
        key: String(p.position),
        label: `Stroke ${p.position}`,
        value: p.relativePct,
        odd: r.summary.lowPositions.includes(p.position),
      })),
      { left: 0, width: 400, top: 0, bottom: 100 },
      100,
    );
    const line = l.y(85);
    const below = l.bars.filter((b) => b.y > line);
    expect(below).toHaveLength(1);
    expect(below[0].odd).toBe(true);
    expect(l.bars.filter((b) => b.odd)).toHaveLength(1);
    // its height: 70 % of the strongest (generator), within 5 points as the analysis's own tests allow
    expect(Math.abs(below[0].value! - 70)).toBeLessThan(5);
  });
});

describe("the safety caution, once per trace", () => {
  it("stays beside the first advice that carries it and is dropped from the others", () => {
    // the report: the same caution three times on one trace
    const f = (code: string): Finding => ({
      code: code as Finding["code"],
      severity: "warning",
      message: code,
      advice: `Do this. ${SECONDARY_SAFETY}`,
    });
    const out = withCautionsOnce([f("a"), f("b"), f("c")]);
    expect(out.map((x) => x.caution)).toEqual([SECONDARY_SAFETY, null, null]);
    expect(out.every((x) => x.advice === "Do this.")).toBe(true);
  });
});
