import { describe, expect, it } from "vitest";
import { assertCents, formatCents, parseCents, splitBetween, splitCents, sumCents } from "../../../shared/domain/money";

describe("splitCents", () => {
  it("desk + expert = total for every total and share (no rounding loss)", () => {
    // Arithmetic: an integer split must conserve the total exactly.
    const shares = [0, 1, 333, 1500, 2000, 2500, 3333, 5000, 6667, 9999, 10000];
    for (let total = 0; total <= 2000; total += 7) {
      for (const bps of shares) {
        const { deskCents, expertCents } = splitCents(total, bps);
        expect(deskCents + expertCents).toBe(total);
        expect(Number.isInteger(deskCents) && Number.isInteger(expertCents)).toBe(true);
        // desk rounded down: desk ≤ exact share < desk + 1
        expect(deskCents * 10000).toBeLessThanOrEqual(total * bps);
        expect((deskCents + 1) * 10000).toBeGreaterThan(total * bps);
      }
    }
  });

  it("examples: the odd cent goes to the expert", () => {
    // Arithmetic: 20 % of $10.01 is 200.2 cents → desk 200, expert 801; 15 % of $49.00 is exact.
    expect(splitCents(1001, 2000)).toEqual({ deskCents: 200, expertCents: 801 });
    expect(splitCents(4900, 1500)).toEqual({ deskCents: 735, expertCents: 4165 });
    expect(splitCents(1, 5000)).toEqual({ deskCents: 0, expertCents: 1 });
    expect(splitCents(12345, 0)).toEqual({ deskCents: 0, expertCents: 12345 });
    expect(splitCents(12345, 10000)).toEqual({ deskCents: 12345, expertCents: 0 });
  });

  it("stays exact at the largest safe integer", () => {
    // Arithmetic: (2^53 − 1) · 2500 / 10000 = 2251799813685247.75 → 2251799813685247 (BigInt reference).
    const total = Number.MAX_SAFE_INTEGER;
    const { deskCents, expertCents } = splitCents(total, 2500);
    expect(BigInt(deskCents)).toBe((BigInt(total) * 2500n) / 10000n);
    expect(BigInt(deskCents) + BigInt(expertCents)).toBe(BigInt(total));
  });

  it("guards against non-integers and out-of-range shares", () => {
    // Project rule (shared/domain/money.ts): amounts are whole cents (safe integers, ECMA-262
    // Number.isSafeInteger: |x| ≤ 2^53 − 1), shares are basis points 0–10000 (1 bp = 0.01 %, definition).
    expect(() => splitCents(10.5, 2000)).toThrow(TypeError);
    expect(() => splitCents(Number.NaN, 2000)).toThrow(TypeError);
    expect(() => splitCents(-1, 2000)).toThrow(RangeError);
    expect(() => splitCents(1000, 20.5)).toThrow(RangeError);
    expect(() => splitCents(1000, 10001)).toThrow(RangeError);
    expect(() => splitCents(1000, -1)).toThrow(RangeError);
    // 2^53 is the first integer above Number.MAX_SAFE_INTEGER (ECMA-262)
    expect(() => assertCents(2 ** 53)).toThrow(TypeError);
    expect(() => sumCents([1, 2.5])).toThrow(TypeError);
    // arithmetic: 100 + 250 − 50 = 300
    expect(sumCents([100, 250, -50])).toBe(300);
  });
});

describe("formatCents", () => {
  it("matches Intl.NumberFormat's en-US currency format", () => {
    // Reference: ECMA-402 Intl.NumberFormat (CLDR en-US): "$1,234.56".
    expect(formatCents(123456)).toBe("$1,234.56");
    expect(formatCents(123456)).toBe(
      new Intl.NumberFormat("en-US", { style: "currency", currency: "USD" }).format(1234.56),
    );
    expect(formatCents(5)).toBe("$0.05");
    expect(formatCents(-5)).toBe(new Intl.NumberFormat("en-US", { style: "currency", currency: "USD" }).format(-0.05));
    expect(formatCents(0)).toBe("$0.00");
  });

  it("is exact for large amounts and respects the currency's minor units", () => {
    // Reference: Intl.NumberFormat — EUR has 2 minor digits, JPY none (ISO 4217).
    expect(formatCents(900719925474099)).toBe("$9,007,199,254,740.99");
    expect(formatCents(1234, "EUR", "en-US")).toBe(
      new Intl.NumberFormat("en-US", { style: "currency", currency: "EUR" }).format(12.34),
    );
    expect(formatCents(1234, "JPY", "en-US")).toBe(
      new Intl.NumberFormat("en-US", { style: "currency", currency: "JPY" }).format(1234),
    );
  });

  it("refuses non-integers", () => {
    // Project rule (shared/domain/money.ts): amounts are whole cents; 12.5 cents and Infinity are not.
    expect(() => formatCents(12.5)).toThrow(TypeError);
    expect(() => formatCents(Number.POSITIVE_INFINITY)).toThrow(TypeError);
  });
});

describe("parseCents", () => {
  it("parses typed amounts without floating point", () => {
    // Arithmetic: "0.29" must be 29 cents exactly (0.29 * 100 in floating point is 28.999999999999996).
    expect(parseCents("0.29")).toBe(29);
    expect(parseCents("12")).toBe(1200);
    expect(parseCents("12.5")).toBe(1250);
    expect(parseCents("$1,234.56")).toBe(123456);
    expect(parseCents("-3.10")).toBe(-310);
    // Project rule: at most two decimals, no exponent, digits on both sides of the point.
    for (const bad of ["", "abc", "1.234", "1e3", "12.", ".5"]) expect(parseCents(bad), bad).toBeNull();
  });

  it("accepts a comma only as a thousands separator in groups of three", () => {
    // Reference: ECMA-402 Intl.NumberFormat (CLDR en-US) groups thousands with commas in threes —
    // the amounts below are formatted by Intl, not typed in.
    const enUS = (x: number) => new Intl.NumberFormat("en-US", { minimumFractionDigits: 2 }).format(x);
    expect(enUS(1234.56)).toBe("1,234.56");
    expect(parseCents(enUS(1234.56))).toBe(123456);
    expect(parseCents(enUS(1_000_000))).toBe(100_000_000); // "1,000,000.00"
    expect(parseCents(enUS(987_654_321.09))).toBe(98_765_432_109);
    expect(parseCents("1,000")).toBe(100_000);
    expect(parseCents("$12,345")).toBe(1_234_500);
  });

  it("refuses commas that are not thousands groups (ambiguous or malformed)", () => {
    // "12,50" is twelve and a half with a decimal comma (ISO 80000-1 §7.3.2) but 1250 if the comma
    // were dropped: refused rather than guessed (project rule: never a factor of 100 off).
    // "1,2,3", ",123", "1,23", "1,234,5": not groups of three after the first (CLDR en-US grouping).
    for (const bad of ["12,50", "1,2,3", ",123", "1,23", "1,234,5", "1,,234", "01,234", "1,234.567"]) {
      expect(parseCents(bad), bad).toBeNull();
    }
    // spaces inside the number are not read as grouping either ("1 2" is not 12)
    expect(parseCents("1 2")).toBeNull();
    expect(parseCents("  12.50 ")).toBe(1250);
  });
});

describe("splitBetween", () => {
  // Project rule (issue 5): every cent is accounted for. Worked by hand: 1001 ¢ at a 20 % desk share
  // splits 200 / 801 (floor of 200.2 to the desk). Refunded as 334 + 334 + 333, the cumulative
  // splits are split(334) = 66/268, split(668) = 133/535, split(1001) = 200/801, so the three
  // reversals are 66/268, 67/267, 67/266 — adding up to 200/801 exactly. Splitting each piece on
  // its own would give 66/268 three times less a cent: 198/803, two cents adrift.
  it("pieces taken in turn add up to the split of the whole", () => {
    const parts = [splitBetween(0, 334, 2000), splitBetween(334, 668, 2000), splitBetween(668, 1001, 2000)];
    expect(parts).toEqual([
      { deskCents: 66, expertCents: 268 },
      { deskCents: 67, expertCents: 267 },
      { deskCents: 67, expertCents: 266 },
    ]);
    expect(parts.reduce((s, p) => s + p.deskCents, 0)).toBe(200);
    expect(parts.reduce((s, p) => s + p.expertCents, 0)).toBe(801);
  });

  it("refuses a running amount that goes down", () => {
    expect(() => splitBetween(500, 400, 2000)).toThrow(RangeError);
  });
});
