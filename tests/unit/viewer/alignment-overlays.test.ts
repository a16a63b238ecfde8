import { describe, expect, it } from "vitest";
import {
  alignmentLevel,
  alignmentTime,
  firstCrossing,
  midLevel,
  refineWindow,
  toDisplayTime,
  toTraceTime,
} from "../../../src/features/traces/lib/alignment";
import {
  analysisToPlot,
  annotationShapes,
  edgeMarker,
  eventMarkers,
  isInverted,
  hitTestAnnotations,
  hitTestCursors,
  jumpWindow,
  type PlotFrame,
} from "../../../src/features/traces/lib/overlay-geometry";
import { TRACE_PALETTE, traceColor, withAlpha } from "../../../src/features/traces/lib/palette";
import { channelUnits } from "../../../src/lib/trace-units";
import type { Annotation, TraceInfo } from "../../../src/features/traces/types";

const trace = (extra: Partial<TraceInfo> = {}): TraceInfo => ({
  id: "a",
  name: "Coil 1",
  samples: 1000,
  sampleRateHz: 1e5,
  durationS: 0.01,
  channels: [{ name: "A", unit: "V", min: 0, max: 10 }],
  settings: { voltsPerDiv: 2, timePerDivS: 1e-3 },
  ...extra,
});

describe("first crossing in min/max buckets (hand-built data)", () => {
  const t = [0, 1, 2, 3, 4, 5];
  it("finds the first rising crossing of 4 V at the bucket that reaches it", () => {
    expect(firstCrossing(t, [0, 0, 0, 5, 5, 0], [0, 0, 1, 9, 6, 0], 4, "rising")).toBe(3);
  });
  it("needs the signal below the level first: starting above, the crossing is after the dip", () => {
    expect(firstCrossing(t, [5, 5, 0, 0, 5, 5], [6, 6, 1, 1, 9, 9], 4, "rising")).toBe(4);
  });
  it("counts a bucket holding both sides of the level (a spike inside one bucket)", () => {
    expect(firstCrossing(t, [0, 0, 0, 0, 0, 0], [1, 1, 9, 1, 1, 1], 4, "rising")).toBe(2);
  });
  it("finds falling crossings and returns null when there is none", () => {
    expect(firstCrossing(t, [5, 5, 5, 1, 5, 5], [6, 6, 6, 6, 6, 6], 4, "falling")).toBe(3);
    expect(firstCrossing(t, [0, 0, 0, 0, 0, 0], [1, 1, 1, 1, 1, 1], 4, "rising")).toBeNull();
  });
  it("takes the mid level of the data as the fallback level", () => {
    expect(midLevel({ min: [0, -2, 1], max: [3, 8, 2] })).toBe(3);
    expect(midLevel({ min: [1], max: [1] })).toBeNull();
  });
});

describe("alignment for the overlay", () => {
  it("uses the first analysis event when there is one", () => {
    const tr = trace({
      analysis: { kind: "secondary-ignition", unit: "kV", events: [{ timeS: 0.0042 }, { timeS: 0.02 }] },
    });
    expect(alignmentTime(tr)).toEqual({ time: 0.0042, source: "event" });
  });
  it("else the first crossing of the recorded trigger level with its slope in the window data", () => {
    const tr = trace({ settings: { voltsPerDiv: 2, timePerDivS: 1e-3, triggerLevel: 4, triggerSlope: "rising" } });
    const data = { t: [0, 0.001, 0.002, 0.003], series: [{ name: "A", min: [0, 0, 0, 0], max: [1, 2, 7, 1] }] };
    expect(alignmentTime(tr, data)).toEqual({ time: 0.002, source: "crossing" });
  });
  it("else the trace's start", () => {
    expect(alignmentTime(trace({ t0: -0.001 }))).toEqual({ time: -0.001, source: "start" });
  });
  it("converts between display time and trace time", () => {
    expect(toDisplayTime(0.005, 0.002)).toBeCloseTo(0.003, 15);
    expect(toTraceTime(0.003, 0.002)).toBeCloseTo(0.005, 15);
  });
});

describe("event markers", () => {
  // Markers are drawn in the channel's physical unit (shared/trace/units channelUnits): kV at the
  // plug for a pickup with a kV/V scale (volts at the scope × kV/V), amperes through a clamp
  // (volts ÷ mV/A × 1000), a kV file as it is. Pickup scales in kV/V and clamp scales in mV/A are
  // common practice, no source.
  const volts = channelUnits("V");
  const pickup = channelUnits("V", { probe: "capacitive-secondary", kvPerVolt: 10 });
  const pickupMv = channelUnits("mV", { probe: "capacitive-secondary", kvPerVolt: 10 });
  const kvFile = channelUnits("kV", { probe: "capacitive-secondary", kvPerVolt: 10 });
  const clamp = channelUnits("V", { probe: "current-clamp", mvPerAmp: 100 });

  it("puts the analysis's values in the physical unit: 12 kV stays 12 kV; 1.2 V at the scope × 10 kV/V is 12 kV", () => {
    expect(analysisToPlot(12, { unit: "kV" }, pickup)).toBeCloseTo(12, 12);
    expect(analysisToPlot(12, { unit: "kV" }, pickupMv)).toBeCloseTo(12, 12);
    expect(analysisToPlot(1.2, { unit: "V" }, pickup)).toBeCloseTo(12, 12);
    expect(analysisToPlot(1.5, { unit: "V" }, volts)).toBe(1.5);
    // a file recorded in kV: reported in kV as it is, the pickup scale not applied again
    expect(analysisToPlot(8, { unit: "kV" }, kvFile)).toBeCloseTo(8, 12);
    // a clamp at 100 mV/A: 0.5 V at the scope ÷ 0.1 V/A = 5 A (hand-computed); 5 A stays 5 A
    expect(analysisToPlot(0.5, { unit: "V" }, clamp)).toBeCloseTo(5, 12);
    expect(analysisToPlot(5, { unit: "A" }, clamp)).toBeCloseTo(5, 12);
  });

  it("spans the burn time from the firing line: 1.5 ms from 20 ms ends at 21.5 ms, shifted by the overlay offset", () => {
    const analysis = {
      kind: "secondary-ignition",
      unit: "V",
      events: [{ timeS: 0.02, peak: 9, burnTimeMs: 1.5, burnLevel: 1.2 }],
    };
    const [m] = eventMarkers(analysis, volts);
    expect(m.tFire).toBe(0.02);
    expect(m.tStart).toBe(0.02);
    expect(m.tEnd).toBeCloseTo(0.0215, 12);
    expect(m.peakLevel).toBe(9);
    expect(m.burnLevel).toBe(1.2);
    const [s] = eventMarkers(analysis, volts, 0.02);
    expect(s.tFire).toBe(0);
    expect(s.tEnd).toBeCloseTo(0.0015, 12);
  });

  it("draws the spark line where the analysis found it when it gives its start and end", () => {
    const analysis = {
      kind: "secondary-ignition",
      unit: "V",
      events: [{ timeS: 0.01, burnTimeMs: 1.4, burnLevel: 1, sparkStartS: 0.01002, sparkEndS: 0.0114 }],
    };
    const [m] = eventMarkers(analysis, volts);
    expect(m.tStart).toBe(0.01002);
    expect(m.tEnd).toBe(0.0114);
  });

  it("puts magnitudes on the firing line's side of the baseline: below it for an inverted capture", () => {
    // baseline 0.5 kV, inverted: peak 9 kV → 0.5 − 9 = −8.5 kV; burn level 1.2 kV → −0.7 kV (hand-computed)
    const analysis = {
      kind: "secondary-ignition",
      unit: "kV",
      summary: { baseline: 0.5, polarity: "negative" as const },
      events: [{ timeS: 0, peak: 9, burnLevel: 1.2, burnTimeMs: 1 }],
    };
    const [m] = eventMarkers(analysis, pickup);
    expect(m.peakLevel).toBe(-8.5);
    expect(m.burnLevel).toBeCloseTo(-0.7, 12);
    expect(isInverted({ findings: [{ code: "inverted" }] })).toBe(true);
    expect(eventMarkers(null, volts)).toEqual([]);
  });

  it("marks only the time of events of other kinds (their peaks are not heights above a baseline)", () => {
    const [m] = eventMarkers({ kind: "relative-compression", unit: "A", events: [{ timeS: 0.15, peak: 40 }] }, clamp);
    expect(m).toEqual({ tFire: 0.15, peakLevel: null, tStart: null, tEnd: null, burnLevel: null, burnTimeMs: null });
  });
});

describe("alignment level", () => {
  it("takes the trigger level from the scope's unit into the file's: 300 mV typed for a file in mV is 300 mV", () => {
    const tr = trace({
      channels: [{ name: "A", unit: "mV", min: 0, max: 900 }],
      settings: { voltsPerDiv: 0.2, timePerDivS: 1e-3, triggerLevel: 0.3 },
    });
    // scope unit V (shared/trace/units: a file in mV has its settings typed in volts); 0.3 V = 300 mV
    const cu = channelUnits("mV");
    expect(alignmentLevel(tr, null, 1 / cu.scopeFromFile)).toBeCloseTo(300, 9);
  });
});

describe("annotation geometry and hit tests (pixel maths, hand-computed)", () => {
  // 0…10 s over 500 px from x = 0; −10…+6 V over 320 px from y = 0 (top = +6 V)
  const f: PlotFrame = { left: 0, top: 0, width: 500, height: 320, x: (t) => t * 50, y: (v) => ((6 - v) / 16) * 320 };
  const ann = (a: Partial<Annotation> & Pick<Annotation, "id" | "kind" | "t0">): Annotation => ({
    traceId: "a",
    color: "#000",
    ...a,
  });
  const list = [
    ann({ id: "pin", kind: "pin", t0: 2, level: 0 }),
    ann({ id: "span", kind: "span", t0: 6, t1: 8 }),
    ann({ id: "lvl", kind: "level", t0: 0, level: -6 }),
    ann({ id: "note", kind: "note", t0: 9 }),
  ];
  const shapes = annotationShapes(list, f);

  it("places pins, spans, levels and notes", () => {
    expect(shapes[0]).toMatchObject({ x0: 100, y: 120 });
    expect(shapes[1]).toMatchObject({ x0: 300, x1: 400 });
    expect(shapes[2]).toMatchObject({ y: 240 });
    expect(shapes[3].flag).toMatchObject({ x: 450, y: 0 });
  });

  it("finds the mark under the pointer, lines before span areas", () => {
    expect(hitTestAnnotations(shapes, 104, 300, f, 8)).toBe("pin");
    expect(hitTestAnnotations(shapes, 350, 100, f, 8)).toBe("span");
    expect(hitTestAnnotations(shapes, 350, 243, f, 8)).toBe("lvl");
    expect(hitTestAnnotations(shapes, 455, 6, f, 8)).toBe("note");
    expect(hitTestAnnotations(shapes, 200, 60, f, 8)).toBeNull();
  });

  it("finds the cursor line under the pointer", () => {
    const c = { ta: 2, tb: 4, va: -2, vb: 2 };
    expect(hitTestCursors(c, 98, 10, f, 10)).toBe("ta"); // 2 s is at x = 100
    expect(hitTestCursors(c, 205, 10, f, 10)).toBe("tb"); // 4 s is at x = 200
    expect(hitTestCursors(c, 330, 162, f, 10)).toBe("va"); // −2 V is at y = 160
    expect(hitTestCursors(c, 330, 10, f, 10)).toBeNull();
  });

  it("jumps to a span with a quarter either side, to a point mark centred at the narrower of current and capture span", () => {
    expect(jumpWindow({ kind: "span", t0: 1, t1: 3 }, 5, 10)).toEqual({ t0: 0.5, t1: 3.5 });
    expect(jumpWindow({ kind: "pin", t0: 5 }, 2, 10)).toEqual({ t0: 4, t1: 6 });
    expect(jumpWindow({ kind: "note", t0: 5 }, 40, 10)).toEqual({ t0: 0, t1: 10 });
  });

  it("says which edge to point at for a level off the screen", () => {
    expect(edgeMarker(8, -10, 6)).toBe("above");
    expect(edgeMarker(-12, -10, 6)).toBe("below");
    expect(edgeMarker(0, -10, 6)).toBe("in");
  });
});

describe("trace palette", () => {
  // WCAG 2.1, definitions of relative luminance and contrast ratio (W3C Recommendation, 2018);
  // success criterion 1.4.11 asks 3:1 for graphics, 1.4.3 asks 4.5:1 for text — we hold every colour to 4.5:1.
  const lum = (hex: string) => {
    const n = parseInt(hex.slice(1), 16);
    const c = [(n >> 16) & 255, (n >> 8) & 255, n & 255].map((x) => {
      const s = x / 255;
      return s <= 0.03928 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4;
    });
    return 0.2126 * c[0] + 0.7152 * c[1] + 0.0722 * c[2];
  };
  const contrast = (a: string, b: string) => {
    const [x, y] = [lum(a), lum(b)].sort((p, q) => q - p);
    return (x + 0.05) / (y + 0.05);
  };
  it("reads on the white plot area (≥ 4.5:1) and the reference pair checks out (black on white is 21:1)", () => {
    expect(contrast("#000000", "#ffffff")).toBeCloseTo(21, 6);
    for (const c of TRACE_PALETTE) expect(contrast(c, "#ffffff")).toBeGreaterThanOrEqual(4.5);
  });
  it("cycles and converts hex to rgba", () => {
    expect(traceColor(TRACE_PALETTE.length)).toBe(TRACE_PALETTE[0]);
    expect(new Set(TRACE_PALETTE).size).toBe(TRACE_PALETTE.length);
    expect(withAlpha("#ff8000", 0.5)).toBe("rgba(255, 128, 0, 0.5)");
  });
});

describe("refining a coarse crossing", () => {
  it("fetches two coarse buckets either side: 100 ms in 4000 buckets is 25 µs each → ±50 µs (hand-computed)", () => {
    const w = refineWindow(0.0061, { t0: 0, t1: 0.1, width: 4000 }, { start: 0, end: 0.1 });
    expect(w.t0).toBeCloseTo(0.00605, 12);
    expect(w.t1).toBeCloseTo(0.00615, 12);
    expect(refineWindow(0, { t0: 0, t1: 0.1, width: 4000 }, { start: 0, end: 0.1 }).t0).toBe(0);
  });
  it("keeps the coarse data's level for the fine search (a fine window's own mid level would differ)", () => {
    const tr = trace();
    const coarse = { t: [0, 1, 2, 3], series: [{ name: "A", min: [0, 0, 0, 0], max: [0, 0, 10, 0] }] };
    expect(alignmentLevel(tr, coarse)).toBe(5);
    // fine data spanning 1.9–2.1: values 0 → 3 → 7 → 10; level 5 first reached in the third bucket
    const fine = { t: [1.9, 1.95, 2.0, 2.05], series: [{ name: "A", min: [0, 3, 7, 9], max: [1, 4, 8, 10] }] };
    expect(alignmentTime(tr, fine, 5)).toEqual({ time: 2.0, source: "crossing" });
  });
});
