import { describe, expect, it } from "vitest";
import {
  decodeVin,
  modelYearCandidates,
  normalizeVin,
  validateVin,
  vinCheckDigit,
  vinModelPart,
  vinModelYear,
  vinRegion,
  vinWeightedSum,
} from "../../../shared/domain/vin";

/** Put the §565.15 check digit in position 9 (vinCheckDigit is itself checked against the worked examples below). */
function withCheckDigit(vin: string): string {
  return vin.slice(0, 8) + vinCheckDigit(vin) + vin.slice(9);
}

/** Replace one 1-based position. */
function at(vin: string, position: number, c: string): string {
  return vin.slice(0, position - 1) + c + vin.slice(position);
}

describe("VIN check digit — 49 CFR 565.15, Tables IV and V", () => {
  it("1M8GDM9AXKP042788 → X, weighted sum 351", () => {
    // Source: the worked example in Wikipedia's VIN article (docs/trade-reference.md).
    expect(vinWeightedSum("1M8GDM9AXKP042788")).toBe(351);
    expect(vinCheckDigit("1M8GDM9AXKP042788")).toBe("X");
    expect(validateVin("1M8GDM9AXKP042788")).toEqual({ ok: true, vin: "1M8GDM9AXKP042788", errors: [], warnings: [] });
  });

  it("1G4AH59H?5G118341 → 4, weighted sum 411", () => {
    // Source: the regulation's older sample table (49 CFR 565), via docs/trade-reference.md. '?' marks the unknown digit.
    expect(vinWeightedSum("1G4AH59H?5G118341")).toBe(411);
    expect(vinCheckDigit("1G4AH59H?5G118341")).toBe("4");
    expect(validateVin("1G4AH59H45G118341").warnings).toEqual([]);
  });

  it("1J9RP1A36A1644345 → 6, weighted sum 314", () => {
    // Source: a government guide for new manufacturers (docs/trade-reference.md).
    expect(vinWeightedSum("1J9RP1A36A1644345")).toBe(314);
    expect(vinCheckDigit("1J9RP1A36A1644345")).toBe("6");
    expect(validateVin("1J9RP1A36A1644345").ok).toBe(true);
  });

  it("11111111111111111 → 1", () => {
    // Source: docs/trade-reference.md (the all-ones VIN is its own check: sum of weights 89, 89 mod 11 = 1).
    expect(vinWeightedSum("11111111111111111")).toBe(89);
    expect(vinCheckDigit("11111111111111111")).toBe("1");
    expect(validateVin("11111111111111111").warnings).toEqual([]);
  });

  it("5GZCZ43D13S812715 → 1; the variant starting with S would need X", () => {
    // Source: docs/trade-reference.md (the S-variant is a widely copied invalid example).
    expect(vinCheckDigit("5GZCZ43D13S812715")).toBe("1");
    expect(validateVin("5GZCZ43D13S812715").warnings).toEqual([]);
    expect(vinCheckDigit("SGZCZ43D13S812715")).toBe("X");
    const v = validateVin("SGZCZ43D13S812715");
    expect(v.ok).toBe(true); // well-formed: a wrong check digit is a warning, not an error
    expect(v.errors).toEqual([]);
    expect(v.warnings).toHaveLength(1);
    expect(v.warnings[0]).toMatchObject({ code: "check-digit", expected: "X", position: 9 });
    expect(v.warnings[0].message).toContain('"X"');
  });

  it("a single changed character is caught by the check digit", () => {
    // Source: 49 CFR 565.15 — the weighted mod-11 sum changes when one non-zero-weight character changes value.
    const good = "1M8GDM9AXKP042788";
    const bad = at(good, 17, "9");
    expect(validateVin(bad).warnings.map((w) => w.code)).toEqual(["check-digit"]);
    expect(decodeVin(bad).checkDigitValid).toBe(false);
    expect(decodeVin(good).checkDigitValid).toBe(true);
  });

  it("refuses to compute over a malformed VIN", () => {
    // Source: 49 CFR 565.13 — 17 characters, I/O/Q excluded.
    expect(() => vinCheckDigit("1M8GDM9AXKP04278")).toThrow(RangeError);
    expect(() => vinCheckDigit("1M8GDM9AXKP04278I")).toThrow(RangeError);
  });
});

describe("VIN normalization", () => {
  it("trims, uppercases and drops spaces and dashes", () => {
    // Common practice, no source: VINs are written with spaces/dashes on paperwork.
    expect(normalizeVin("  1m8gdm9a-xkp 042788 ")).toBe("1M8GDM9AXKP042788");
    expect(validateVin(" 1m8gdm9a xkp-042788").vin).toBe("1M8GDM9AXKP042788");
  });
});

describe("VIN refusals — 49 CFR 565.13 and 565.15", () => {
  it("length other than 17 is an error", () => {
    // Source: 49 CFR 565.15 — a VIN has 17 characters.
    for (const vin of ["1M8GDM9AXKP04278", "1M8GDM9AXKP0427888", "1M8"]) {
      const v = validateVin(vin);
      expect(v.ok).toBe(false);
      expect(v.errors.map((e) => e.code)).toContain("length");
      expect(v.errors.find((e) => e.code === "length")!.message).toContain(String(vin.length));
    }
    expect(validateVin("").errors.map((e) => e.code)).toEqual(["empty"]);
  });

  it.each([
    ["I", 4],
    ["O", 12],
    ["Q", 17],
  ])("the letter %s is refused, naming position %i", (letter, position) => {
    // Source: 49 CFR 565.13 — I, O and Q are never used.
    const vin = at("1M8GDM9AXKP042788", position, letter);
    const v = validateVin(vin);
    expect(v.ok).toBe(false);
    expect(v.errors).toHaveLength(1);
    expect(v.errors[0]).toMatchObject({ code: "character", position });
    expect(v.errors[0].message).toContain(`Position ${position}`);
    expect(v.errors[0].message).toContain(letter);
  });

  it("characters other than A–Z and 0–9 are refused, naming the position", () => {
    // Source: 49 CFR 565.13 — only Roman letters and Arabic numerals.
    for (const [c, position] of [
      ["#", 5],
      ["?", 9],
      ["Ä", 2],
      [".", 17],
    ] as const) {
      const v = validateVin(at("1M8GDM9AXKP042788", position, c));
      expect(v.ok).toBe(false);
      expect(v.errors[0]).toMatchObject({ code: "character", position });
      expect(v.errors[0].message).toContain(`Position ${position}`);
    }
  });

  it("a letter other than X in position 9 is an error, not an overridable warning", () => {
    // Source: 49 CFR 565.15 (docs/trade-reference.md) — position 9 is the check digit, 0–9 or X.
    // 1M8GDM9ABKP042788 is the worked example 1M8GDM9AXKP042788 with B in place of X.
    const v = validateVin("1M8GDM9ABKP042788");
    expect(v.ok).toBe(false);
    expect(v.errors).toEqual([expect.objectContaining({ code: "check-digit-character", position: 9 })]);
    expect(v.errors[0].message).toBe('Position 9 is the check digit, a digit 0–9 or X; "B" cannot stand there.');
    expect(v.warnings).toEqual([]);
    expect(() => decodeVin("1M8GDM9ABKP042788")).toThrow(/Position 9/);
    expect(() => vinModelPart("1M8GDM9ABKP042788")).toThrow(RangeError);
    // every allowed letter but X (49 CFR 565.13 character set, 565.15 check digit)
    for (const c of "ABCDEFGHJKLMNPRSTUVWYZ") {
      expect(
        validateVin(at("1M8GDM9AXKP042788", 9, c)).errors.map((e) => e.code),
        c,
      ).toEqual(["check-digit-character"]);
    }
    // X and the digits are allowed there; a wrong digit is only the overridable check-digit warning
    expect(validateVin("1M8GDM9AXKP042788").ok).toBe(true);
    const wrongDigit = validateVin("1M8GDM9A1KP042788");
    expect(wrongDigit).toMatchObject({ ok: true, errors: [] });
    expect(wrongDigit.warnings.map((w) => w.code)).toEqual(["check-digit"]);
  });

  it.each(["U", "Z", "0"])("model-year code %s in position 10 is refused for a North American WMI", (c) => {
    // Source: 49 CFR 565.15 Table II (docs/trade-reference.md) — never I O Q U Z 0 in position 10.
    const vin = withCheckDigit(at("1M8GDM9AXKP042788", 10, c));
    const v = validateVin(vin);
    expect(v.ok).toBe(false);
    expect(v.errors).toEqual([expect.objectContaining({ code: "year-character", position: 10 })]);
    expect(v.errors[0].message).toContain("Position 10");
    // first characters 1–5 are North America (ISO 3779 region table, from memory): all refused
    for (const first of ["1", "2", "3", "4", "5"]) {
      expect(
        validateVin(withCheckDigit(at(vin, 1, first))).errors.map((e) => e.code),
        first,
      ).toEqual(["year-character"]);
    }
  });

  it.each(["U", "Z", "0"])("model-year code %s in position 10 outside North America is an overridable warning", (c) => {
    // From memory: VINs of vehicles built for markets outside North America need not carry a
    // model-year code in position 10; the rule of 49 CFR 565.15 Table II applies to North America.
    for (const first of ["W", "S", "J", "K", "9", "6", "A"]) {
      const vin = withCheckDigit(at(at("1M8GDM9AXKP042788", 1, first), 10, c));
      const v = validateVin(vin);
      expect(v.ok, vin).toBe(true);
      expect(v.errors).toEqual([]);
      expect(v.warnings).toEqual([expect.objectContaining({ code: "year-character", position: 10 })]);
      expect(v.warnings[0].message).toContain(`"${c}"`);
      // no model year can be read from it
      expect(decodeVin(vin)).toMatchObject({ modelYear: null, modelYearCandidates: [] });
    }
  });

  it("U, Z and 0 are allowed outside position 10", () => {
    // Source: 49 CFR 565.13 — only I, O, Q are excluded from the character set.
    const vin = withCheckDigit("1U8GZM0A?KP042788");
    expect(validateVin(vin)).toMatchObject({ ok: true, errors: [], warnings: [] });
  });

  it("decodeVin and vinModelPart refuse a malformed VIN", () => {
    // Source: 49 CFR 565.13.
    expect(() => decodeVin("1M8GDM9AXKP04278O")).toThrow(/Position 17/);
    expect(() => vinModelPart("1M8GDM9AXKP0427")).toThrow(RangeError);
  });
});

describe("VIN model year — position 10, 30-year cycle chosen by position 7 (49 CFR 565.15(b))", () => {
  // Source: docs/trade-reference.md, 49 CFR 565.15 Table II: A=1980/2010 … H=1987/2017, J=1988/2018,
  // P=1993/2023, R=1994/2024, Y=2000/2030, 1–9 = 2001–2009 / 2031–2039.
  const table: [string, number][] = [
    ["A", 1980],
    ["H", 1987],
    ["J", 1988],
    ["K", 1989],
    ["N", 1992],
    ["P", 1993],
    ["R", 1994],
    ["S", 1995],
    ["T", 1996],
    ["V", 1997],
    ["W", 1998],
    ["X", 1999],
    ["Y", 2000],
    ["1", 2001],
    ["9", 2009],
  ];

  it.each(table)("%s → %i or %i+30", (code, year) => {
    expect(modelYearCandidates(code)).toEqual([year, year + 30]);
  });

  it.each(table)("%s: position 7 numeric → the 1980–2009 cycle, alphabetic → 2010–2039", (code, year) => {
    const numeric = withCheckDigit(at(at("1M8GDM9AXKP042788", 7, "9"), 10, code));
    const alphabetic = withCheckDigit(at(at("1M8GDM9AXKP042788", 7, "C"), 10, code));
    expect(decodeVin(numeric).modelYear).toBe(year);
    expect(decodeVin(alphabetic).modelYear).toBe(year + 30);
    expect(decodeVin(alphabetic).modelYearCandidates).toEqual([year, year + 30]);
  });

  it("the worked examples decode to their years", () => {
    // Source: docs/trade-reference.md examples; position 7 '9' (numeric) with K → 1989; 'A' (alphabetic) with A → 2010.
    expect(decodeVin("1M8GDM9AXKP042788").modelYear).toBe(1989);
    expect(decodeVin("1J9RP1A36A1644345").modelYear).toBe(2010);
    expect(decodeVin("1G4AH59H45G118341").modelYear).toBe(2005);
  });

  it("invalid year codes give no candidates; a heavy vehicle leaves the cycle open", () => {
    // Source: 49 CFR 565.15(b) — the position-7 rule applies to light vehicles only.
    expect(modelYearCandidates("U")).toEqual([]);
    expect(modelYearCandidates("0")).toEqual([]);
    expect(vinModelYear("1M8GDM9AXKP042788", { lightVehicle: false })).toBeNull();
    expect(decodeVin("1M8GDM9AXKP042788", { lightVehicle: false })).toMatchObject({
      modelYear: null,
      modelYearCandidates: [1989, 2019],
    });
  });
});

describe("VIN regions — first character (ISO 3779 region table, from memory)", () => {
  it.each([
    ["1", "North America"],
    ["3", "North America"],
    ["5", "North America"],
    ["S", "Europe"],
    ["W", "Europe"],
    ["Z", "Europe"],
    ["J", "Asia"],
    ["K", "Asia"],
    ["R", "Asia"],
    ["A", "Africa"],
    ["H", "Africa"],
    ["6", "Oceania"],
    ["7", "Oceania"],
    ["8", "South America"],
    ["9", "South America"],
  ])("%s → %s", (c, region) => {
    // From memory: ISO 3779 region table, as given in docs/trade-reference.md.
    expect(vinRegion(c)).toBe(region);
    const vin = withCheckDigit(at("1M8GDM9AXKP042788", 1, c));
    expect(decodeVin(vin).region).toBe(region);
  });

  it("I, O, Q and non-characters have no region", () => {
    // Source: 49 CFR 565.13 — I/O/Q never appear.
    expect(vinRegion("I")).toBe("unknown");
    expect(vinRegion("#")).toBe("unknown");
  });
});

describe("VIN sections — 49 CFR 565.15", () => {
  it("splits WMI, VDS, check digit, VIS and serial", () => {
    // Source: 49 CFR 565.15 — WMI positions 1–3, VDS 4–8, check digit 9, VIS 10–17.
    expect(decodeVin("1M8GDM9AXKP042788")).toEqual({
      vin: "1M8GDM9AXKP042788",
      wmi: "1M8",
      region: "North America",
      manufacturerCode: "1M8",
      smallManufacturer: false,
      modelYear: 1989,
      modelYearCandidates: [1989, 2019],
      vds: "GDM9A",
      vis: "KP042788",
      serial: "042788",
      checkDigit: "X",
      checkDigitValid: true,
    });
  });

  it("position 3 = 9 marks a small manufacturer whose code continues in positions 12–14", () => {
    // Source: 49 CFR 565.15(a) (docs/trade-reference.md); example VIN from a government guide for new manufacturers.
    const d = decodeVin("1J9RP1A36A1644345");
    expect(d.smallManufacturer).toBe(true);
    expect(d.manufacturerCode).toBe("1J9644");
    expect(d.wmi).toBe("1J9");
  });

  it("vinModelPart keeps positions 1–8, 10 and 11 and never the serial", () => {
    // Project rule (anonymised casebook); positions per 49 CFR 565.15.
    expect(vinModelPart("1M8GDM9AXKP042788")).toBe("1M8GDM9AKP");
    const part = vinModelPart("5GZCZ43D13S812715");
    expect(part).toBe("5GZCZ43D3S");
    expect(part).not.toContain("812715");
  });
});
