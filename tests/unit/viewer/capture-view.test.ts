import { describe, expect, it } from "vitest";
import {
  captureTimeWindow,
  captureView,
  fitRange,
  PRE_TRIGGER_FRACTION,
  traceBounds,
  unionRange,
} from "../../../src/features/traces/lib/capture-view";
import { divisionStep, gridLines, labelEvery, niceStep, niceStepNear } from "../../../src/features/traces/lib/grid";
import type { TraceInfo } from "../../../src/features/traces/types";

const base: TraceInfo = {
  id: "t1",
  name: "Coil 1",
  samples: 50_001,
  sampleRateHz: 1e6,
  durationS: 0.05,
  channels: [{ name: "A", unit: "V", min: -3, max: 14 }],
  settings: { voltsPerDiv: 2, timePerDivS: 1e-3, groundOffsetDiv: 1 },
};

describe("capture view", () => {
  it("spans ten horizontal divisions of the time base from the trace start", () => {
    // Screen of 10 × 8 divisions: common practice for bench scopes, no source. 10 × 1 ms = 10 ms (hand-computed).
    const v = captureView(base);
    expect(v.t0).toBe(0);
    expect(v.t1).toBeCloseTo(0.01, 12);
    expect(v.timePerDivS).toBe(1e-3);
  });

  it("shows eight vertical divisions at volts/division with the ground offset: 2 V/div, ground +1 div → −10…+6 V", () => {
    // Hand-computed: 0 V one division above centre leaves 5 divisions below (−10 V) and 3 above (+6 V).
    const v = captureView(base);
    expect(v.vMin).toBeCloseTo(-10, 12);
    expect(v.vMax).toBeCloseTo(6, 12);
    expect((v.vMax - v.vMin) / v.voltsPerDiv).toBeCloseTo(8, 12);
  });

  it("starts at the trace's own t0 when the file's time does not start at zero", () => {
    // Hand-computed: t0 = −2 ms, 0.5 ms/div → −2 ms … +3 ms.
    const v = captureView({ ...base, t0: -0.002, settings: { ...base.settings, timePerDivS: 5e-4 } });
    expect(v.t0).toBeCloseTo(-0.002, 12);
    expect(v.t1).toBeCloseTo(0.003, 12);
  });

  it("puts a known trigger point 15 % into the screen (10–20 % pre-trigger is common practice, no source)", () => {
    const v = captureView({ ...base, analysis: { kind: "secondary-ignition", unit: "kV", events: [{ timeS: 0.02 }] } });
    expect(PRE_TRIGGER_FRACTION).toBeGreaterThanOrEqual(0.1);
    expect(PRE_TRIGGER_FRACTION).toBeLessThanOrEqual(0.2);
    // Hand-computed: 20 ms − 0.15 × 10 ms = 18.5 ms … 28.5 ms.
    expect(v.t0).toBeCloseTo(0.0185, 12);
    expect(v.t1).toBeCloseTo(0.0285, 12);
    expect(v.triggerTimeS).toBe(0.02);
    expect((v.triggerTimeS! - v.t0) / (v.t1 - v.t0)).toBeCloseTo(0.15, 12);
  });

  it("keeps the screen inside a trace long enough to fill it", () => {
    const b = { start: 0, end: 0.05 };
    // Trigger at 0.5 ms would start the screen at −1 ms: clamped to the start (hand-computed).
    expect(captureTimeWindow(1e-3, b, 0.0005)).toEqual({ t0: 0, t1: 0.01 });
    // Trigger at 49 ms would run past the end: the screen ends at 50 ms.
    const w = captureTimeWindow(1e-3, b, 0.049);
    expect(w.t0).toBeCloseTo(0.04, 12);
    expect(w.t1).toBeCloseTo(0.05, 12);
    // A trace shorter than the screen starts at its start; the rest of the screen is empty.
    expect(captureTimeWindow(1e-2, b, 0.02)).toEqual({ t0: 0, t1: 0.1 });
  });

  it("scales the screen and the trigger level by the probe into the physical unit", () => {
    // the settings are typed in the scope's unit (shared/trace/units): 0.5 V/div × 10 kV/V = 5 kV/div,
    // ground at the centre → −20…+20 kV; a 0.3 V trigger is 3 kV at the plug (hand-computed)
    const pickup = captureView({
      ...base,
      settings: { voltsPerDiv: 0.5, timePerDivS: 1e-3, kvPerVolt: 10, triggerLevel: 0.3 },
    });
    expect(pickup.voltsPerDiv).toBeCloseTo(5, 12);
    expect(pickup.vMin).toBeCloseTo(-20, 12);
    expect(pickup.vMax).toBeCloseTo(20, 12);
    expect(pickup.triggerLevel).toBeCloseTo(3, 12);
    // a file in kV: its volts/division are in kV already (not scaled again): 5 kV/div
    const kv = captureView({
      ...base,
      channels: [{ name: "A", unit: "kV", min: -1, max: 9 }],
      settings: { voltsPerDiv: 5, timePerDivS: 1e-3, kvPerVolt: 10 },
    });
    expect(kv.voltsPerDiv).toBe(5);
    // a 100 mV/A clamp: 1 V/div ÷ 0.1 V/A = 10 A/div (hand-computed)
    const clamp = captureView({
      ...base,
      settings: { voltsPerDiv: 1, timePerDivS: 1e-3, probe: "current-clamp", mvPerAmp: 100 },
    });
    expect(clamp.voltsPerDiv).toBeCloseTo(10, 12);
  });

  it("marks the recorded trigger level and falls back to the data's extent without settings", () => {
    expect(captureView({ ...base, settings: { ...base.settings, triggerLevel: 3 } }).triggerLevel).toBe(3);
    expect(captureView(base).triggerLevel).toBeNull();
    const v = captureView({ ...base, settings: { voltsPerDiv: 0, timePerDivS: 0 } });
    // Hand-computed: the whole 50 ms trace, levels from −3 V to 14 V in 8 divisions of 2.125 V.
    expect(v.t1 - v.t0).toBeCloseTo(0.05, 12);
    expect(v.vMin).toBe(-3);
    expect(v.vMax).toBeCloseTo(14, 12);
    expect(v.voltsPerDiv).toBeCloseTo(2.125, 12);
  });

  it("bounds, unions and fits ranges", () => {
    expect(traceBounds({ t0: 1, durationS: 2 })).toEqual({ start: 1, end: 3 });
    expect(
      unionRange([
        { vMin: -10, vMax: 6 },
        { vMin: -4, vMax: 12 },
      ]),
    ).toEqual({ vMin: -10, vMax: 12 });
    // Hand-computed: 5 % margin of a 20 V span is 1 V.
    expect(fitRange(-10, 10)).toEqual({ vMin: -11, vMax: 11 });
  });
});

describe("division grid", () => {
  it("uses the 1-2-5 sequence when zoomed (the usual scope sequence, common practice, no source)", () => {
    expect(niceStep(0.3e-3)).toBeCloseTo(0.5e-3, 15);
    expect(niceStep(1e-3)).toBeCloseTo(1e-3, 15);
    expect(niceStep(1.1)).toBe(2);
    expect(niceStep(2.5)).toBe(5);
    expect(niceStep(6)).toBe(10);
    expect(niceStep(0.07)).toBeCloseTo(0.1, 15);
  });

  it("picks the 1-2-5 step nearest on a log scale when zoomed", () => {
    // hand-computed: |ln(200/217)| = 0.08 < |ln(500/217)| = 0.83
    expect(niceStepNear(0.217e-3)).toBeCloseTo(0.2e-3, 15);
    expect(niceStepNear(0.4e-3)).toBeCloseTo(0.5e-3, 15);
    expect(niceStepNear(1.5)).toBe(2);
    expect(niceStepNear(7.5)).toBe(10);
    expect(niceStepNear(1)).toBe(1);
  });

  it("keeps the capture's own per-division value at the capture span, even when it is not a 1-2-5 value", () => {
    expect(divisionStep(0.01, 1e-3, 10)).toBe(1e-3);
    expect(divisionStep(0.003, 0.3e-3, 10)).toBe(0.3e-3);
    // zoomed ×2 in on 0.3 ms/div: 1.5 ms / 10 = 0.15 ms → next 1-2-5 step 0.2 ms
    expect(divisionStep(0.0015, 0.3e-3, 10)).toBeCloseTo(0.2e-3, 15);
  });

  it("draws nine lines for eight divisions of 2 V from −10 V to +6 V, the ground line among them", () => {
    const lines = gridLines(-10, 6, 2, -10);
    expect(lines).toEqual([-10, -8, -6, -4, -2, 0, 2, 4, 6]);
  });

  it("anchors lines at the screen edge when the ground offset is a half division", () => {
    // 2 V/div, ground +0.5 div → −9 V … +7 V (hand-computed), lines on the division edges
    const lines = gridLines(-9, 7, 2, -9);
    expect(lines).toHaveLength(9);
    expect(lines[0]).toBe(-9);
    expect(lines[8]).toBe(7);
  });

  it("keeps eleven time lines across ten 1 ms divisions despite float steps", () => {
    const lines = gridLines(0.0185, 0.0285, 1e-3, 0.0185);
    expect(lines).toHaveLength(11);
    expect(lines[10]).toBeCloseTo(0.0285, 12);
  });

  it("labels every other line when they are closer than the label width", () => {
    // 11 lines on 390 px: 39 px apart; labels need 50 px → every 2nd (hand-computed)
    expect(labelEvery(11, 390, 50)).toBe(2);
    expect(labelEvery(11, 800, 50)).toBe(1);
  });
});
