/**
 * Pure pieces of the casebook and report screens: splitting a search snippet at its markers, and
 * the geometry of a printed trace figure. Expected values are worked by hand from the inputs.
 */
import { describe, expect, it } from "vitest";
import { snippetParts } from "../../../src/features/casebook/lib/snippet";
import { figureGeometry, figureWindow } from "../../../src/features/report/lib/figure";

describe("snippet markers", () => {
  it("splits plain and marked text, keeping markup characters as text", () => {
    expect(snippetParts("a \u0002coil\u0003 b \u0002boot\u0003")).toEqual([
      { text: "a ", mark: false },
      { text: "coil", mark: true },
      { text: " b ", mark: false },
      { text: "boot", mark: true },
    ]);
    expect(snippetParts("<img src=x onerror=alert(1)> \u0002x\u0003")).toEqual([
      { text: "<img src=x onerror=alert(1)> ", mark: false },
      { text: "x", mark: true },
    ]);
    expect(snippetParts("")).toEqual([]);
  });
});

describe("printed trace figure", () => {
  const box = { width: 120, height: 70, left: 10, right: 10, top: 5, bottom: 15 };
  it("maps time and volts into the plot box and draws the min/max envelope", () => {
    // plot box: x 10…110 (100 px) for t 0…1 s; y 5…55 (50 px) for the padded volt range
    const g = figureGeometry({ t: [0, 0.5], series: [{ name: "A", min: [-1, 0], max: [1, 2] }] }, [], 0, 1, box);
    // range −1…2 padded by 6 % of 3 V = 0.18 V on each side: −1.18…2.18
    expect(g.vMin).toBeCloseTo(-1.18, 9);
    expect(g.vMax).toBeCloseTo(2.18, 9);
    expect(g.x(0)).toBe(10);
    expect(g.x(0.5)).toBe(60);
    expect(g.y(g.vMax)).toBeCloseTo(5, 9);
    expect(g.y(g.vMin)).toBeCloseTo(55, 9);
    expect(g.envelope.startsWith("M10,")).toBe(true);
    expect(g.envelope.endsWith("Z")).toBe(true);
    // ticks every 200 ms across 1000 ms: 0, 200 … 1000
    expect(g.timeTicks.map((t) => t.label)).toEqual(["0 ms", "200 ms", "400 ms", "600 ms", "800 ms", "1000 ms"]);
  });

  it("keeps only the marks inside the window and remembers which mark each is", () => {
    const marks = [
      { id: "a", kind: "pin" as const, t0: 2, t1: null, level: null, label: null, color: "#000" },
      { id: "b", kind: "span" as const, t0: 0.25, t1: 0.75, level: null, label: "burn", color: "#f00" },
      { id: "c", kind: "level" as const, t0: 0, t1: null, level: 0.5, label: null, color: "#00f" },
    ];
    const g = figureGeometry({ t: [0, 1], series: [{ name: "A", min: [0, 0], max: [1, 1] }] }, marks, 0, 1, box);
    expect(g.marks).toEqual([
      { kind: "span", x0: 35, x1: 85, index: 1 },
      { kind: "level", y: g.y(0.5), index: 2 },
    ]);
  });

  it("prints around the marks, else one firing of a secondary capture, never past the trace", () => {
    const trace = {
      t0: 0,
      durationS: 0.33,
      kind: "secondary-ignition",
      settings: { timePerDivS: 0.033 },
      analysis: { kind: "secondary-ignition", events: [{ timeS: 0.0012 }] },
    };
    // one span of 0.6 ms: 1.2 ms (twice the extent) each side
    const w = figureWindow(trace, [
      { id: "s", kind: "span", t0: 0.01, t1: 0.0106, level: null, label: null, color: "#000" },
    ]);
    expect(w.t0).toBeCloseTo(0.0088, 9);
    expect(w.t1).toBeCloseTo(0.0118, 9);
    // one firing: 0.5 ms before the firing line, 5 ms long
    const f = figureWindow(trace, []);
    expect(f.t0).toBeCloseTo(0.0007, 9);
    expect(f.t1).toBeCloseTo(0.0057, 9);
    // a generic capture: the ten divisions of the capture view from its start
    expect(figureWindow({ ...trace, kind: "generic", analysis: null }, [])).toEqual({ t0: 0, t1: 0.33 });
    // a mark at the very start: the window moves right instead of leaving the trace
    const s = figureWindow(trace, [{ id: "p", kind: "pin", t0: 0, t1: null, level: null, label: null, color: "#000" }]);
    expect(s.t0).toBe(0);
    expect(s.t1).toBeCloseTo(0.002, 9);
  });
});
