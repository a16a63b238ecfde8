import { describe, expect, it } from "vitest";
import { guessKind } from "../../../shared/analysis/guess";
import { makeTrace } from "../../../demo/generators/common";
import { generateCompression } from "../../../demo/generators/compression";
import { generateCrank } from "../../../demo/generators/crank";
import { generateInjector } from "../../../demo/generators/injector";
import { generateSecondary } from "../../../demo/generators/secondary";

describe("guessKind: a kind offered from the settings and the shape", () => {
  it.each([
    ["secondary ignition", generateSecondary({ seed: 1, events: 2, rpm: 3000 }).trace, "secondary-ignition"],
    [
      "inverted secondary",
      generateSecondary({ seed: 2, events: 2, rpm: 3000, polarity: -1 }).trace,
      "secondary-ignition",
    ],
    ["injector", generateInjector({ seed: 3 }).trace, "injector"],
    ["crank sensor", generateCrank({ seed: 4 }).trace, "crank"],
    ["starter current", generateCompression({ seed: 5 }).trace, "relative-compression"],
    // one firing in a short capture: its spark line fills the upper percentiles (common practice, no source)
    [
      "one firing at 200 kS/s",
      generateSecondary({ seed: 6, events: 1, sampleRateHz: 200e3 }).trace,
      "secondary-ignition",
    ],
    ["one firing at 1 MS/s", generateSecondary({ seed: 7, events: 1, sampleRateHz: 1e6 }).trace, "secondary-ignition"],
  ] as const)("from the shape: %s", (_n, trace, kind) => {
    const g = guessKind({}, trace);
    expect(g.kind).toBe(kind);
    expect(g.from).toBe("shape");
    expect(g.reason.length).toBeGreaterThan(10);
  });

  it("a pulse train with a small duty cycle is not taken for firing lines", () => {
    // 5 % duty square wave, 0–5 V: its high level holds for 5 % of the samples, so it is not a spike
    const square = makeTrace(100_000, [
      { name: "A", unit: "V", values: Float32Array.from({ length: 20_000 }, (_, i) => (i % 1000 < 50 ? 5 : 0)) },
    ]);
    expect(guessKind({}, square).kind).not.toBe("secondary-ignition");
  });

  it("the settings' circuit or sensor text comes first", () => {
    const sine = makeTrace(10_000, [
      { name: "A", unit: "V", values: Float32Array.from({ length: 5000 }, (_, i) => Math.sin(i / 10)) },
    ]);
    expect(guessKind({ sensor: "crankshaft position (VR)" }, sine)).toMatchObject({ kind: "crank", from: "settings" });
    expect(guessKind({ circuit: "injector 3 control" }, sine)).toMatchObject({ kind: "injector", from: "settings" });
    expect(guessKind({ circuit: "starter cable" }, sine)).toMatchObject({
      kind: "relative-compression",
      from: "settings",
    });
    expect(guessKind({ circuit: "coil on plug, cylinder 2" }, sine)).toMatchObject({
      kind: "secondary-ignition",
      from: "settings",
    });
  });

  it("falls back to the probe, then to generic", () => {
    const flat = makeTrace(1000, [{ name: "A", unit: "V", values: new Float32Array(500).fill(1.2) }]);
    expect(guessKind({ probe: "capacitive-secondary" }, flat)).toMatchObject({
      kind: "secondary-ignition",
      from: "settings",
    });
    expect(guessKind({ probe: "current-clamp" }, flat)).toMatchObject({
      kind: "relative-compression",
      from: "settings",
    });
    expect(guessKind({}, flat)).toMatchObject({ kind: "generic", from: "default" });
  });
});
