import { describe, expect, it } from "vitest";
import { cursorReadout, defaultCursors, perDivText } from "../../../src/features/traces/lib/readout";
import {
  channelUnits,
  formatFrequency,
  formatInUnit,
  formatLevel,
  formatSI,
  formatTicks,
  formatTime,
  parseUnit,
  toPhysical,
} from "../../../src/lib/trace-units";

describe("SI formatting (prefixes from the SI Brochure, 9th edition, BIPM 2019, Table 7)", () => {
  it("chooses the prefix that puts the mantissa in [1, 1000)", () => {
    expect(formatTime(0.0015)).toBe("1.5 ms");
    expect(formatTime(2.5e-6)).toBe("2.5 µs");
    expect(formatTime(40e-9)).toBe("40 ns");
    expect(formatTime(2)).toBe("2 s");
    expect(formatSI(20000, "V")).toBe("20 kV");
    expect(formatSI(-0.25, "V")).toBe("-250 mV");
    expect(formatSI(0, "V")).toBe("0 V");
  });

  it("carries a rounded 1000 into the next prefix", () => {
    expect(formatSI(999.999, "V")).toBe("1 kV");
    expect(formatTime(0.9999999)).toBe("1 s");
  });

  it("reads prefixed channel units: 1500 mV is 1.5 V, 'u' means micro", () => {
    expect(parseUnit("mV")).toEqual({ base: "V", scale: 1e-3, si: true });
    expect(parseUnit("uA")).toEqual({ base: "A", scale: 1e-6, si: true });
    expect(parseUnit(null)).toEqual({ base: "V", scale: 1, si: true });
    expect(parseUnit("psi")).toEqual({ base: "psi", scale: 1, si: false });
    expect(formatInUnit(1500, "mV")).toBe("1.5 V");
    expect(formatInUnit(12.5, "psi")).toBe("12.5 psi");
  });
});

describe("cursor readout", () => {
  it("Δt = 1.5 ms gives 1/Δt = 666.67 Hz (f = 1/T, hand-computed: 1/0.0015 = 666.666…)", () => {
    const r = cursorReadout({ ta: 0.001, tb: 0.0025, va: 0, vb: 0 }, channelUnits("V"));
    expect(r.dt).toBeCloseTo(0.0015, 15);
    expect(r.freqHz).toBeCloseTo(666.6667, 3);
    expect(r.text.dt).toBe("1.5 ms");
    expect(r.text.freq).toBe("666.67 Hz");
  });

  it("gives the frequency of a reversed pair as positive and none for Δt = 0", () => {
    const r = cursorReadout({ ta: 0.003, tb: 0.001, va: 0, vb: 0 }, channelUnits("V"));
    expect(r.text.dt).toBe("-2 ms");
    expect(r.text.freq).toBe("500 Hz");
    expect(cursorReadout({ ta: 1, tb: 1, va: 0, vb: 0 }, channelUnits("V")).freqHz).toBeNull();
  });

  // Cursor levels are in the channel's physical unit (shared/trace/units): volts at the scope without
  // a probe scale; kV at the plug with a 10 kV/V pickup; amperes with a 100 mV/A clamp (pickup and
  // clamp scales as printed on the probe: common practice, no source).
  it("ΔV in volts with prefixes when the channel shows volts: −1.25 V … 2.5 V → 3.75 V", () => {
    const r = cursorReadout({ ta: 0, tb: 1, va: -1.25, vb: 2.5 }, channelUnits("V"));
    expect(r.text.dv).toBe("3.75 V");
    expect(r.dvLabel).toBe("ΔV");
    // a file in mV shows volts: 250 mV = 0.25 V (milli = 1e-3, SI Brochure Table 7) → "250 mV"
    expect(cursorReadout({ ta: 0, tb: 1, va: 0, vb: 0.25 }, channelUnits("mV")).text.dv).toBe("250 mV");
  });

  it("with a capacitive pickup at 10 kV per volt every level reads kV, never pickup volts", () => {
    const cu = channelUnits("V", { probe: "capacitive-secondary", kvPerVolt: 10 });
    // 0.3 V and 1.5 V at the scope are 3 kV and 15 kV at the plug (× 10 kV/V, hand-computed)
    const r = cursorReadout({ ta: 0, tb: 1, va: 0.3 * cu.perScope, vb: 1.5 * cu.perScope }, cu);
    expect(r.text.dv).toBe("12 kV");
    expect(r.text.va).toBe("3 kV");
    // a small level stays in kV: 0.5 kV, not "500 V"
    expect(formatLevel(0.5, cu.unit)).toBe("0.5 kV");
    expect(formatLevel(7.834, "kV")).toBe("7.83 kV");
  });

  it("with a current clamp at 100 mV per amp, 0.5 V is 5 A (0.5 V ÷ 0.1 V/A, hand-computed) and reads ΔA", () => {
    const cu = channelUnits("V", { probe: "current-clamp", mvPerAmp: 100 });
    expect(toPhysical(0.5, "V", cu)).toBeCloseTo(5, 12);
    const r = cursorReadout({ ta: 0, tb: 1, va: 0, vb: 0.5 * cu.perScope }, cu);
    expect(r.text.dv).toBe("5 A");
    expect(r.dvLabel).toBe("ΔA");
    expect(formatFrequency(5e6)).toBe("5 MHz");
  });

  it("puts default cursors at a third and two thirds of the view, and writes per-division labels", () => {
    const c = defaultCursors(0, 0.009, -10, 6);
    expect(c.ta).toBeCloseTo(0.003, 15);
    expect(c.tb).toBeCloseTo(0.006, 15);
    expect(c.va).toBeCloseTo(-10 + 16 / 3, 12);
    expect(perDivText(0.0005, null, "time")).toBe("500 µs/div");
    expect(perDivText(2, "V", "level")).toBe("2 V/div");
    // the display unit's own division: 5 kV/div at the plug, 10 A/div through a clamp, 0.5 kV/div kept in kV
    expect(perDivText(5, "kV", "level")).toBe("5 kV/div");
    expect(perDivText(10, "A", "level")).toBe("10 A/div");
    expect(perDivText(0.5, "kV", "level")).toBe("0.5 kV/div");
  });
});

describe("grid labels", () => {
  it("shows each grid value with as few decimals as its step needs (hand-computed)", () => {
    expect(formatTicks([0.0185, 0.0195, 0.0205], 1e-3, "s")).toEqual(["18.5 ms", "19.5 ms", "20.5 ms"]);
    expect(formatTicks([-10, -8, 0, 6], 2, "V")).toEqual(["-10 V", "-8 V", "0 V", "6 V"]);
    expect(formatTicks([-0.5, 0, 0.5], 0.5, "V")).toEqual(["-500 mV", "0 V", "500 mV"]);
    // 1 µs steps 5 s from zero stay distinct
    expect(formatTicks([5.000001, 5.000002], 1e-6, "s")).toEqual(["5.000001 s", "5.000002 s"]);
    expect(formatTicks([250, 500], 250, "mV")).toEqual(["250 mV", "500 mV"]);
    // a prefixed display unit keeps its prefix on every label
    expect(formatTicks([-5, 0, 2.5, 15], 2.5, "kV")).toEqual(["-5 kV", "0 kV", "2.5 kV", "15 kV"]);
    expect(formatTicks([0, 0.5, 1], 0.5, "kV")).toEqual(["0 kV", "0.5 kV", "1 kV"]);
  });
});
