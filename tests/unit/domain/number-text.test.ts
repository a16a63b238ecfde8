import { describe, expect, it } from "vitest";
import { fmtNum } from "../../../src/features/analysis/lib/format";
import { parseNumberInput } from "../../../src/features/uploads/lib/settings";
import { vehicleTitle } from "../../../src/features/cases/lib/labels";

// Numbers as the client shows and reads them (client helpers in src/features/*/lib).

describe("fmtNum — measurement tables", () => {
  // Reference: ECMA-402 Intl.NumberFormat en-US (CLDR) for the grouping and rounding of whole
  // numbers (rounding mode halfExpand: half away from zero) — computed, not typed in; the rule
  // "three significant digits below 1000, whole numbers from 1000 up, exponent only from 1e9" is a
  // project rule (consistent rounding across a table).
  const whole = (x: number) => new Intl.NumberFormat("en-US", { maximumFractionDigits: 0 }).format(x);

  it("whole numbers with grouping from 1000 up, the same for integers and fractions", () => {
    expect(whole(1726.25)).toBe("1,726");
    // 1726 and 1726.25 read alike (they used to give "1,726" and "1,730")
    expect(fmtNum(1726)).toBe("1,726");
    expect(fmtNum(1726.25)).toBe("1,726");
    for (const x of [1000, 1726, 1726.25, 12345.6, 99999.5, 100000, 123456.5, 999_999_999, -1726.5, -12345.6]) {
      expect(fmtNum(x), String(x)).toBe(whole(x));
    }
    expect(fmtNum(12345.6)).toBe("12,346");
    expect(fmtNum(99999.5)).toBe("100,000");
    // no exponent at 100000 (it used to give "1.00e+5")
    expect(fmtNum(100000)).toBe("100,000");
    // the digits argument only concerns numbers below 1000
    expect(fmtNum(1726.25, 2)).toBe("1,726");
  });

  it("three significant digits below 1000", () => {
    // Reference: Number.prototype.toPrecision (ECMA-262) for 3 significant digits.
    for (const x of [999.4, 123.456, 12.345, 1.2345, 0.5, 0.012345, 0.000123, -42.42]) {
      expect(fmtNum(x), String(x)).toBe(
        Number(x.toPrecision(3)).toLocaleString("en-US", { maximumFractionDigits: 20 }),
      );
    }
    expect(fmtNum(12.345)).toBe("12.3");
    expect(fmtNum(0.000123)).toBe("0.000123");
    expect(fmtNum(42)).toBe("42");
    // 999.7 at three digits is 1000 (toPrecision gives "1.00e+3"): shown as the whole number "1,000"
    expect((999.7).toPrecision(3)).toBe("1.00e+3");
    expect(fmtNum(999.7)).toBe("1,000");
  });

  it("exponent form only from 1e9 and below 1e-4; residues read as 0; nothing as —", () => {
    // Reference: Number.prototype.toExponential(2) (ECMA-262).
    expect(fmtNum(1e9)).toBe((1e9).toExponential(2));
    expect(fmtNum(1e9)).toBe("1.00e+9");
    expect(fmtNum(5e-5)).toBe("5.00e-5");
    // project rule: below 1e-7 is a floating-point residue (a baseline of 1e-9 V) and reads as 0
    expect(fmtNum(1e-9)).toBe("0");
    expect(fmtNum(null)).toBe("—");
    expect(fmtNum(Number.NaN)).toBe("—");
  });
});

describe("parseNumberInput — capture settings fields", () => {
  it("reads a decimal point or a decimal comma (ISO 80000-1 §7.3.2: comma or point on the line)", () => {
    expect(parseNumberInput("0.5")).toEqual({ ok: true, value: 0.5 });
    expect(parseNumberInput("0,5")).toEqual({ ok: true, value: 0.5 });
    expect(parseNumberInput("12,50")).toEqual({ ok: true, value: 12.5 });
    expect(parseNumberInput("0,001")).toEqual({ ok: true, value: 0.001 });
    expect(parseNumberInput("1,5e3")).toEqual({ ok: true, value: 1500 });
    // scientific notation (ECMA-262 numeric literal grammar): 1e6 = 1,000,000
    expect(parseNumberInput(" 1e6 ")).toEqual({ ok: true, value: 1e6 });
    expect(parseNumberInput("")).toEqual({ ok: true, value: undefined });
  });

  it("reads thousands commas in groups of three when unambiguous (CLDR en-US grouping, via Intl)", () => {
    const enUS = new Intl.NumberFormat("en-US").format(1_000_000);
    expect(enUS).toBe("1,000,000");
    expect(parseNumberInput(enUS)).toEqual({ ok: true, value: 1e6 });
    expect(parseNumberInput(new Intl.NumberFormat("en-US").format(2500.5))).toEqual({ ok: true, value: 2500.5 }); // "2,500.5"
  });

  it('refuses "1,000" with a hint: one thousand (thousands comma) or 1.000 (decimal comma)', () => {
    // "1,000" is one thousand in en-US (Intl.NumberFormat) and 1.000 with a decimal comma
    // (ISO 80000-1 §7.3.2); it used to be read as 1.
    expect(new Intl.NumberFormat("en-US").format(1000)).toBe("1,000");
    const r = parseNumberInput("1,000");
    expect(r).toEqual({
      ok: false,
      message: "“1,000” could be 1000 or 1.000: write it without the comma (1000) or with a decimal point (1.000).",
    });
    expect(parseNumberInput("12,345").ok).toBe(false);
    expect(parseNumberInput("-1,000").ok).toBe(false);
  });

  it("refuses what is not a decimal number, including forms Number() accepts", () => {
    // ECMA-262: Number("0x10") is 16 and Number("Infinity") is Infinity — not numbers a tech types.
    expect(Number("0x10")).toBe(16);
    for (const bad of ["0x10", "Infinity", "abc", "1,000,5", "1.2.3", "1,2,3", "--1", "1e"]) {
      expect(parseNumberInput(bad), bad).toEqual({ ok: false, message: "Enter a number." });
    }
  });
});

describe("vehicleTitle", () => {
  it("joins the known parts; invented names only (project rule: no real brands)", () => {
    expect(vehicleTitle({ year: 2019, make: "Veltra", model: "Sorrel" })).toBe("2019 Veltra Sorrel");
    expect(vehicleTitle({ make: "Korrin", model: "" })).toBe("Korrin");
    expect(vehicleTitle(null)).toBe("Vehicle not entered yet");
  });
});
