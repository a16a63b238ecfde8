/**
 * Relative compression from starter current, on captures of an independent model
 * (demo/generators/starter.ts): the motor's back-EMF ties current and speed. At key-on the motor
 * stands still and draws its stall current; the engine's speed approaches the cranking speed as
 * ω(t) = ω_c·(1 − e^(−t/τm)) and the current falls as I_c + (I_stall − I_c)·e^(−t/τm); each
 * compression stroke adds a bump around its top dead centre (every 720°/N of crank angle: rising
 * over 100° while the charge is compressed, falling over 40° after TDC), of height ΔI × the
 * cylinder's factor. Truth from the parameters: one stroke per TDC, its time, the cylinder's factor
 * as the relative compression, rpm = 120·f_peaks/N (trade reference).
 */
import { describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import type { CompressionResult } from "../../../shared/analysis/types";
import { generateStarter, type StarterOptions } from "../../../demo/generators/starter";

function run(opts: StarterOptions, settings: Record<string, unknown> = {}) {
  const g = generateStarter(opts);
  const r = analyzeTrace(
    g.trace,
    { cylinders: opts.cylinders ?? 4, ...settings },
    { kind: "relative-compression" },
  ) as CompressionResult;
  return { g, r };
}

/** the analysed stroke nearest each truth stroke, within a quarter of the stroke spacing */
function match(g: ReturnType<typeof generateStarter>, r: CompressionResult) {
  const spacing = 120 / (g.truth.steadyRpm * g.truth.cylinders);
  return g.truth.strokes.map((t) => {
    const e = r.events.reduce<(typeof r.events)[number] | null>(
      (best, x) => (!best || Math.abs(x.timeS - t.timeS) < Math.abs(best.timeS - t.timeS) ? x : best),
      null,
    );
    return { t, e: e && Math.abs(e.timeS - t.timeS) < spacing / 4 ? e : null };
  });
}

const speeds = [80, 100, 120, 150, 200, 250, 300];

describe("cranking from 80 to 300 rpm: the first stroke after the inrush is kept (issue 11)", () => {
  it.each(speeds.flatMap((rpm) => [3, 4, 6, 8].map((N) => [rpm, N] as const)))("%i rpm, %i cylinders", (rpm, N) => {
    for (const seed of [1, 2]) {
      // at least two engine cycles after the spin-up
      const { g, r } = run({
        seed,
        crankingRpm: rpm,
        cylinders: N,
        durationS: Math.max(2, (120 / rpm) * 2.2),
        spinUpS: seed === 1 ? 0.06 : 0.03,
      });
      const strokeA = 90;
      const pairs = match(g, r);
      // every stroke is found that does not ride on more than half a stroke's worth of inrush —
      // the first such one included, whether it comes 0.1 s or 0.5 s after key-on
      const due = pairs.filter((x) => x.t.inrushA <= 0.5 * strokeA);
      for (const x of due)
        expect(x.e, `stroke at ${x.t.timeS.toFixed(3)} s (${rpm} rpm, ${N} cyl, seed ${seed})`).not.toBeNull();
      expect(pairs.find((x) => x.t === due[0].t)!.e).not.toBeNull();
      // and nothing that is not a stroke: every event sits at a top dead centre
      const spacing = 120 / (rpm * N);
      for (const e of r.events)
        expect(Math.min(...g.truth.tdcTimesS.map((t) => Math.abs(t - e.timeS)))).toBeLessThan(spacing / 4);
      // rpm = 120·f_peaks/N (trade reference) within 2 % of the strokes' own spacing
      expect(Math.abs(r.summary.rpm! - g.truth.rpm) / g.truth.rpm).toBeLessThan(0.02);
      // a healthy engine: no cylinder suspect (below ~85–90 % of the highest, common practice, no source)
      expect(r.summary.lowPositions).toEqual([]);
      expect(r.findings.map((f) => f.code)).not.toContain("low-compression");
      for (const p of r.summary.positions) expect(p.relativePct).toBeGreaterThanOrEqual(90);
      // slow cranking below the usual 150–250 rpm (trade reference)
      expect(r.findings.some((f) => f.code === "slow-cranking")).toBe(r.summary.rpm! < 150);
    }
  });

  it.each([
    [100, 4, [1, 0.7, 1, 1]],
    [180, 6, [1, 1, 1, 1, 0.65, 1]],
    [280, 4, [1, 1, 0.75, 1]],
    [90, 3, [0.7, 1, 1]],
  ] as const)("%i rpm, %i cylinders, one weak cylinder: its strokes and only them are flagged", (rpm, N, factors) => {
    const { g, r } = run({
      seed: 7,
      crankingRpm: rpm,
      cylinders: N,
      factors: [...factors],
      durationS: Math.max(2, (120 / rpm) * 2.5),
    });
    const weakPositions = new Set<number>();
    for (const { t, e } of match(g, r)) {
      if (!e || e.onInrush) continue;
      // relative compression = the cylinder's factor as % of the strongest (model truth), within 6 points
      expect(Math.abs(e.relativePct - t.relativePct!), `stroke at ${t.timeS.toFixed(3)}`).toBeLessThan(6);
      if (t.factor < 1) weakPositions.add(e.position);
    }
    expect(weakPositions.size).toBe(1);
    expect(r.summary.lowPositions).toEqual([...weakPositions]);
    expect(r.findings.filter((f) => f.code === "low-compression").length).toBe(1);
  });
});

describe("starter current in amperes through any clamp scale (issue 11: current never shown as volts)", () => {
  // a clamp's output in mV per ampere: I = V / (mV/A · 1e-3) (definition of the clamp's scale)
  it.each([1, 10, 100])("volts from a %i mV/A clamp read as amperes", (mvPerAmp) => {
    const { g, r } = run({ seed: 3, crankingRpm: 200, cylinders: 4, mvPerAmp }, { probe: "current-clamp", mvPerAmp });
    expect(g.trace.channels[0].unit).toBe("V");
    expect(r.unit).toBe("A");
    expect(r.scopeUnit).toBe("V");
    // each stroke's rise is the model's bump (90 A) within 10 % (smoothing and the overlap of bumps)
    expect(Math.abs(r.summary.peak.median! - 90) / 90).toBeLessThan(0.1);
    expect(r.unitNote).toMatch(/mV\/A/);
  });

  it("the clamp scale without a probe named still means a clamp (mvPerAmp alone)", () => {
    const { r } = run({ seed: 3, crankingRpm: 200, cylinders: 4, mvPerAmp: 10 }, { mvPerAmp: 10 });
    expect(r.unit).toBe("A");
    expect(Math.abs(r.summary.peak.median! - 90) / 90).toBeLessThan(0.1);
  });

  it("a file already in amperes is not scaled by the clamp again", () => {
    const { r } = run({ seed: 3, crankingRpm: 200, cylinders: 4 }, { probe: "current-clamp", mvPerAmp: 100 });
    expect(r.unit).toBe("A");
    expect(r.scopeUnit).toBe("A");
    expect(Math.abs(r.summary.peak.median! - 90) / 90).toBeLessThan(0.1);
    expect(r.unitNote).toMatch(/not applied again/);
  });
});
