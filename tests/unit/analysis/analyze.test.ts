import { describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import { compareTraces } from "../../../shared/analysis/compare";
import type { SecondaryResult, TraceKind } from "../../../shared/analysis/types";
import { traceKinds } from "../../../shared/schemas/capture-settings";
import { makeTrace } from "../../../demo/generators/common";
import { generateSecondary } from "../../../demo/generators/secondary";
import { createRng } from "../../helpers/prng";

describe("analyzeTrace: one entry for every kind", () => {
  const r = createRng(3);
  const odd = {
    "two samples": makeTrace(1000, [{ name: "A", unit: "V", values: new Float32Array([1, 2]) }]),
    flat: makeTrace(1e6, [{ name: "A", unit: "V", values: new Float32Array(5000).fill(0.3) }]),
    "all zero, no unit": makeTrace(1e6, [{ name: "A", unit: null, values: new Float32Array(5000) }]),
    "noise only": makeTrace(1e6, [
      { name: "A", unit: "mV", values: Float32Array.from({ length: 20000 }, () => r.normal()) },
    ]),
    "uneven time": {
      ...makeTrace(1e4, [
        { name: "A", unit: "V", values: Float32Array.from({ length: 1000 }, (_, i) => Math.sin(i / 7)) },
      ]),
      time: Float64Array.from({ length: 1000 }, (_, i) => i * 1e-4 + (i % 3) * 3e-5),
    },
  };
  const settings = [{}, { voltsPerDiv: 1, timePerDivS: 1e-3, triggerLevel: 0.5, mvPerAmp: 1, cylinders: 4 }];
  it.each(Object.entries(odd))("%s: every kind gives finite JSON and no events where there are none", (name, trace) => {
    for (const kind of traceKinds as readonly TraceKind[]) {
      for (const s of settings) {
        const res = analyzeTrace(trace, s, { kind });
        const text = JSON.stringify(res);
        expect(text, `${name} as ${kind}`).not.toMatch(/NaN|Infinity/);
        expect(Object.keys(res).slice(0, 5)).toEqual(["kind", "unit", "events", "summary", "findings"]);
        expect(res.kind).toBe(kind);
        if (name !== "uneven time" && kind !== "generic") expect(res.events.length, `${name} as ${kind}`).toBe(0);
        expect(compareTraces([res, res, res]).outliers).toEqual([]);
      }
    }
  });

  it("picks a channel by name and analyses a window only", () => {
    const g = generateSecondary({ seed: 1, sampleRateHz: 1e6, events: 3, rpm: 3000 });
    const a = g.trace.channels[0];
    const two = makeTrace(1e6, [
      { name: "ref", unit: "V", values: new Float32Array(a.values.length) },
      { name: "coil 2", unit: a.unit, values: a.values },
    ]);
    const whole = analyzeTrace(two, {}, { channel: "coil 2" }) as SecondaryResult;
    expect(whole.channel).toBe("coil 2");
    expect(whole.summary.eventCount).toBe(3);
    const t1 = g.truth.events[1].timeS;
    const part = analyzeTrace(
      two,
      {},
      { channel: 1, window: { startS: t1 - 0.01, endS: t1 + 0.015 } },
    ) as SecondaryResult;
    expect(part.summary.eventCount).toBe(1);
    expect(part.events[0].timeS).toBeCloseTo(whole.events[1].timeS, 6);
    expect(part.measurements.startS).toBeGreaterThanOrEqual(t1 - 0.01);
  });

  it("reports volts for millivolt files, kV for kV files or a kV-per-volt scale", () => {
    const g = generateSecondary({ seed: 2, sampleRateHz: 1e6, events: 1 });
    const v = g.trace.channels[0].values;
    const mv = makeTrace(1e6, [{ name: "A", unit: "mV", values: v.map((x) => x * 1000) }]);
    const kv = makeTrace(1e6, [{ name: "A", unit: "kV", values: v.map((x) => x * 10) }]); // a direct HV probe
    const base = (analyzeTrace(g.trace) as SecondaryResult).events[0].peak;
    expect(analyzeTrace(mv).unit).toBe("V");
    expect((analyzeTrace(mv) as SecondaryResult).events[0].peak).toBeCloseTo(base, 4);
    expect(analyzeTrace(kv).unit).toBe("kV");
    expect((analyzeTrace(kv) as SecondaryResult).events[0].peak).toBeCloseTo(base * 10, 3);
    const scaled = analyzeTrace(g.trace, { kvPerVolt: 12 }) as SecondaryResult;
    expect(scaled.unit).toBe("kV");
    expect(scaled.events[0].peak).toBeCloseTo(base * 12, 3);
  });
});
