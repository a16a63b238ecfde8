import { describe, expect, it } from "vitest";
import { channelUnits, formatQuantity, normaliseUnit, parseUnit, scopeSetting } from "../../../shared/trace/units";

// SI prefixes: BIPM, The International System of Units (SI Brochure, 9th ed., 2019), table 7.
describe("parseUnit / normaliseUnit", () => {
  it("reads SI prefixes and the words exports write", () => {
    expect(parseUnit("mV")).toEqual({ base: "V", scale: 1e-3, si: true });
    expect(parseUnit("kV")).toEqual({ base: "V", scale: 1e3, si: true });
    expect(parseUnit("uA")).toEqual({ base: "A", scale: 1e-6, si: true });
    expect(parseUnit(null)).toEqual({ base: "V", scale: 1, si: true });
    expect(normaliseUnit("Volt")).toBe("V");
    expect(normaliseUnit("(mV)")).toBe("mV");
    expect(normaliseUnit("Amps")).toBe("A");
    expect(normaliseUnit("MV")).toBe("MV"); // megavolts stay megavolts
    expect(normaliseUnit("  ")).toBeNull();
    expect(parseUnit("psi")).toEqual({ base: "psi", scale: 1, si: false });
  });
});

describe("channelUnits", () => {
  // A capacitive pickup's scale multiplies volts at the scope into kV at the plug
  // (common practice, no source: pickups are specified in kV per volt, e.g. 10 kV/V).
  it("volts at the scope with a 10 kV/V pickup read in kV at the plug", () => {
    const cu = channelUnits("V", { probe: "capacitive-secondary", kvPerVolt: 10 });
    expect(cu.unit).toBe("kV");
    expect(cu.scopeUnit).toBe("V");
    expect(0.78 * cu.fromFile).toBeCloseTo(7.8, 12); // 0.78 V × 10 kV/V = 7.8 kV
    expect(cu.perScope).toBe(10);
    expect(cu.source).toBe("pickup");
  });
  it("millivolts at the scope: 1 mV × 10 kV/V = 0.01 kV, settings typed in volts", () => {
    const cu = channelUnits("mV", { probe: "capacitive-secondary", kvPerVolt: 10 });
    expect(cu.fromFile).toBeCloseTo(0.01, 15);
    expect(cu.scopeFromFile).toBeCloseTo(1e-3, 15);
  });
  it("a header in kV is not scaled again, and settings are in kV", () => {
    const cu = channelUnits("kV", { probe: "capacitive-secondary", kvPerVolt: 10 });
    expect(cu).toMatchObject({ unit: "kV", scopeUnit: "kV", fromFile: 1, perScope: 1, source: "file" });
    expect(cu.note).toMatch(/not applied again/);
  });
  // A clamp's output in mV per ampere: I = V / (mV/A · 1e-3) (definition of the clamp's scale).
  it("volts from a 100 mV/A clamp read in amperes: 1 V → 10 A", () => {
    const cu = channelUnits("V", { probe: "current-clamp", mvPerAmp: 100 });
    expect(cu).toMatchObject({ unit: "A", quantity: "current", scopeUnit: "V", source: "clamp" });
    expect(1 * cu.fromFile).toBeCloseTo(10, 12);
  });
  it("a header in A is not scaled by the clamp again", () => {
    const cu = channelUnits("A", { probe: "current-clamp", mvPerAmp: 100 });
    expect(cu).toMatchObject({ unit: "A", scopeUnit: "A", fromFile: 1, source: "file" });
  });
  it("without a probe scale, values stay volts at the scope", () => {
    expect(channelUnits(null, { probe: "capacitive-secondary" })).toMatchObject({ unit: "V", source: "scope" });
    expect(channelUnits("mV", { probe: "current-clamp" })).toMatchObject({
      unit: "V",
      quantity: "current",
      fromFile: 1e-3,
    });
  });
});

describe("formatQuantity / scopeSetting", () => {
  it("puts the mantissa in [1, 1000) with three significant figures", () => {
    expect(formatQuantity(7.834, "kV")).toBe("7.83 kV");
    expect(formatQuantity(0.15128, "V")).toBe("151 mV");
    expect(formatQuantity(250, "A")).toBe("250 A");
    expect(formatQuantity(0.9996, "V")).toBe("1 V");
    expect(formatQuantity(999.96, "V")).toBe("1 kV");
  });
  it("advises in scope units with the physical value beside it", () => {
    const pickup = channelUnits("V", { probe: "capacitive-secondary", kvPerVolt: 10 });
    expect(scopeSetting(2, pickup, "div")).toBe("2 V/div on the scope (20 kV/div at the plug)");
    expect(scopeSetting(0.3, pickup)).toBe("300 mV on the scope (3 kV at the plug)");
    expect(scopeSetting(3, channelUnits("kV", { kvPerVolt: 10 }))).toBe("3 kV");
    expect(scopeSetting(0.5, channelUnits("V", { probe: "current-clamp", mvPerAmp: 100 }), "div")).toBe(
      "500 mV/div on the scope (5 A/div clamp current)",
    );
  });
});
