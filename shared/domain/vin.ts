/**
 * Vehicle identification numbers by the published rules of 49 CFR Part 565
 * (§565.15 content requirements, §565.13 and Tables III–V for characters and the check digit).
 *
 * Pure, browser-safe. All arithmetic is done in integers.
 */

export interface VinIssue {
  /** machine-readable reason, e.g. "length", "character", "check-digit-character", "year-character", "check-digit" */
  code: string;
  message: string;
  /** 1-based position in the VIN, when the issue concerns one character */
  position?: number;
  /** for "check-digit": the digit the other sixteen characters call for */
  expected?: string;
}

export interface VinValidation {
  ok: boolean;
  /** the normalized VIN (see normalizeVin) */
  vin: string;
  /** malformed: the VIN cannot be used */
  errors: VinIssue[];
  /** well-formed but doubtful (wrong check digit; no year code outside North America): the technician may override */
  warnings: VinIssue[];
}

export type VinRegion = "North America" | "South America" | "Europe" | "Asia" | "Africa" | "Oceania" | "unknown";

export interface VinDecoded {
  vin: string;
  /** world manufacturer identifier, positions 1–3 */
  wmi: string;
  region: VinRegion;
  /** WMI, extended with positions 12–14 for a small manufacturer */
  manufacturerCode: string;
  /** position 3 is '9': fewer than 1,000 vehicles a year, positions 12–14 continue the code */
  smallManufacturer: boolean;
  /** the model year chosen by position 7 (light vehicles), or null when it cannot be chosen */
  modelYear: number | null;
  /** every year position 10 can mean in the 1980–2039 range, earliest first */
  modelYearCandidates: number[];
  /** vehicle descriptor section, positions 4–8 (position 9, the check digit, excluded) */
  vds: string;
  /** vehicle indicator section, positions 10–17 */
  vis: string;
  /** positions 12–17 */
  serial: string;
  /** position 9 as written */
  checkDigit: string;
  checkDigitValid: boolean;
}

export interface DecodeVinOptions {
  /**
   * Passenger car, MPV, or truck/bus of 10,000 lb GVWR or less: position 7 picks the 30-year
   * cycle (49 CFR 565.15(b)). Default true. For other vehicles modelYear is null unless only one
   * candidate exists.
   */
  lightVehicle?: boolean;
}

/** Characters allowed in a VIN: A–Z and 0–9 without I, O and Q (49 CFR 565.13). */
const VIN_ALLOWED = /^[A-HJ-NPR-Z0-9]$/;

/** Transliteration of letters to values (49 CFR 565, Table IV). Digits are their own value. */
const TRANSLITERATION: Readonly<Record<string, number>> = {
  A: 1,
  B: 2,
  C: 3,
  D: 4,
  E: 5,
  F: 6,
  G: 7,
  H: 8,
  J: 1,
  K: 2,
  L: 3,
  M: 4,
  N: 5,
  P: 7,
  R: 9,
  S: 2,
  T: 3,
  U: 4,
  V: 5,
  W: 6,
  X: 7,
  Y: 8,
  Z: 9,
};

/** Weight factor by position 1–17 (49 CFR 565, Table V). Position 9 (the check digit) weighs 0. */
export const VIN_WEIGHTS: readonly number[] = [8, 7, 6, 5, 4, 3, 2, 10, 0, 9, 8, 7, 6, 5, 4, 3, 2];

/**
 * Model year codes of position 10 (49 CFR 565.15, Table II): the first year of each code in the
 * 1980–2009 cycle; the same code means +30 in the 2010–2039 cycle. I, O, Q, U, Z and 0 are never used.
 */
const YEAR_CODES = "ABCDEFGHJKLMNPRSTVWXY123456789";
const YEAR_BY_CODE: Readonly<Record<string, number>> = Object.fromEntries([...YEAR_CODES].map((c, i) => [c, 1980 + i]));

/** Trim, uppercase, and drop spaces and dashes (as people write VINs on paper). */
export function normalizeVin(s: string): string {
  return String(s ?? "")
    .trim()
    .toUpperCase()
    .replace(/[\s\-\u2010-\u2015]+/g, "");
}

/** Value of one VIN character for the check digit, or undefined for a character not allowed. */
export function vinCharValue(c: string): number | undefined {
  if (c.length !== 1) return undefined;
  if (c >= "0" && c <= "9") return c.charCodeAt(0) - 48;
  return TRANSLITERATION[c];
}

/**
 * The weighted sum of §565.15 over all positions except 9 (whatever stands there: a digit,
 * X or a placeholder). Throws RangeError if the VIN is not 17 characters or another position
 * holds a character outside the allowed set.
 */
export function vinWeightedSum(vin: string): number {
  const v = normalizeVin(vin);
  if (v.length !== 17) throw new RangeError(`A VIN has 17 characters; this one has ${v.length}.`);
  let sum = 0;
  for (let i = 0; i < 17; i++) {
    if (i === 8) continue;
    const value = vinCharValue(v[i]);
    if (value === undefined) throw new RangeError(`Position ${i + 1}: "${v[i]}" is not allowed in a VIN.`);
    sum += value * VIN_WEIGHTS[i];
  }
  return sum;
}

/** The check digit §565.15 calls for: the weighted sum mod 11, with 10 written as X. */
export function vinCheckDigit(vin: string): string {
  const r = vinWeightedSum(vin) % 11;
  return r === 10 ? "X" : String(r);
}

/**
 * Region of manufacture from the first character. This is the ISO 3779 region table, from memory
 * (0 is listed with South America in the same table, also from memory).
 */
export function vinRegion(first: string): VinRegion {
  const c = (first ?? "").toUpperCase();
  if (c >= "1" && c <= "5") return "North America";
  if (c === "6" || c === "7") return "Oceania";
  if (c === "8" || c === "9" || c === "0") return "South America";
  if (c >= "A" && c <= "H") return "Africa";
  if (c >= "J" && c <= "R") return "Asia";
  if (c >= "S" && c <= "Z") return "Europe";
  return "unknown";
}

/** Both years a position-10 code can mean (1980–2009 and 2010–2039), or [] for an invalid code. */
export function modelYearCandidates(yearChar: string): number[] {
  const first = YEAR_BY_CODE[(yearChar ?? "").toUpperCase()];
  return first === undefined ? [] : [first, first + 30];
}

/**
 * Model year from position 10, with position 7 choosing the cycle for light vehicles
 * (49 CFR 565.15(b)): position 7 numeric → 1980–2009, alphabetic → 2010–2039.
 */
export function vinModelYear(vin: string, options: DecodeVinOptions = {}): number | null {
  const v = normalizeVin(vin);
  const candidates = modelYearCandidates(v[9] ?? "");
  if (candidates.length === 0) return null;
  if (options.lightVehicle === false) return null;
  const p7 = v[6] ?? "";
  if (p7 >= "0" && p7 <= "9") return candidates[0];
  if (p7 >= "A" && p7 <= "Z") return candidates[1];
  return null;
}

/**
 * Structural check and check digit. Errors (the VIN cannot be used): length other than 17,
 * I/O/Q or any character outside A–Z/0–9, a letter other than X in position 9 (§565.15: the check
 * digit is 0–9 or X; code "check-digit-character"), and for a North American WMI (first
 * character 1–5) U, Z or 0 in position 10 (not a model-year code; code "year-character").
 * Warnings (overridable): the check digit of position 9 is not the one §565.15 calls for — code
 * "check-digit", with `expected` (some imports don't use it); U, Z or 0 in position 10 of a VIN
 * from outside North America — code "year-character" (such VINs need not carry a year code, from
 * memory).
 */
export function validateVin(input: string): VinValidation {
  const vin = normalizeVin(input);
  const errors: VinIssue[] = [];
  const warnings: VinIssue[] = [];

  if (vin.length === 0) {
    errors.push({ code: "empty", message: "Enter the 17-character VIN." });
    return { ok: false, vin, errors, warnings };
  }

  for (let i = 0; i < vin.length; i++) {
    const c = vin[i];
    if (VIN_ALLOWED.test(c)) continue;
    const pos = i + 1;
    if (c === "I" || c === "O" || c === "Q") {
      const hint = c === "I" ? "1 (one)" : "0 (zero)";
      errors.push({
        code: "character",
        position: pos,
        message: `Position ${pos}: the letter ${c} is never used in a VIN — did you mean ${hint}?`,
      });
    } else {
      errors.push({
        code: "character",
        position: pos,
        message: `Position ${pos}: "${c}" is not allowed; a VIN uses only letters and digits.`,
      });
    }
  }

  if (vin.length !== 17) {
    errors.push({
      code: "length",
      message: `A VIN has 17 characters; this one has ${vin.length}.`,
    });
  }

  if (vin.length >= 9) {
    const c = vin[8];
    if (VIN_ALLOWED.test(c) && !(c === "X" || (c >= "0" && c <= "9"))) {
      errors.push({
        code: "check-digit-character",
        position: 9,
        message: `Position 9 is the check digit, a digit 0–9 or X; "${c}" cannot stand there.`,
      });
    }
  }

  if (vin.length >= 10) {
    const y = vin[9];
    if (VIN_ALLOWED.test(y) && YEAR_BY_CODE[y] === undefined) {
      if (vinRegion(vin[0]) === "North America") {
        errors.push({
          code: "year-character",
          position: 10,
          message: `Position 10 is the model year; "${y}" is not a model-year code (U, Z and 0 are never used).`,
        });
      } else {
        // From memory: vehicles built for markets outside North America need not carry a year code.
        warnings.push({
          code: "year-character",
          position: 10,
          message: `Position 10 is "${y}", which is not a model-year code (U, Z and 0 are never used), so the VIN gives no model year. Vehicles built for markets outside North America may not carry one; check the VIN for a typo, or keep it if it matches the vehicle.`,
        });
      }
    }
  }

  if (errors.length === 0) {
    const expected = vinCheckDigit(vin);
    const actual = vin[8];
    if (actual !== expected) {
      warnings.push({
        code: "check-digit",
        position: 9,
        expected,
        message: `The check digit (position 9) is "${actual}" but the other characters call for "${expected}". Check the VIN for a typo; some vehicles built for other markets don't use a check digit, so you may override this.`,
      });
    }
  }

  return { ok: errors.length === 0, vin, errors, warnings };
}

/**
 * Decode a structurally valid VIN (throws RangeError with the first error's message otherwise).
 * The check digit may be wrong: that is reported by checkDigitValid, not thrown.
 */
export function decodeVin(input: string, options: DecodeVinOptions = {}): VinDecoded {
  const { vin, errors } = validateVin(input);
  if (errors.length > 0) throw new RangeError(errors[0].message);
  const wmi = vin.slice(0, 3);
  const smallManufacturer = vin[2] === "9";
  return {
    vin,
    wmi,
    region: vinRegion(vin[0]),
    manufacturerCode: smallManufacturer ? wmi + vin.slice(11, 14) : wmi,
    smallManufacturer,
    modelYear: vinModelYear(vin, options),
    modelYearCandidates: modelYearCandidates(vin[9]),
    vds: vin.slice(3, 8),
    vis: vin.slice(9, 17),
    serial: vin.slice(11, 17),
    checkDigit: vin[8],
    checkDigitValid: vin[8] === vinCheckDigit(vin),
  };
}

/**
 * The model-identifying part of a VIN: positions 1–8, 10 and 11 (never the serial, 12–17, and
 * not the check digit, which depends on the serial). Used for anonymised casebook entries.
 * Throws RangeError for a malformed VIN.
 */
export function vinModelPart(input: string): string {
  const { vin, errors } = validateVin(input);
  if (errors.length > 0) throw new RangeError(errors[0].message);
  return vin.slice(0, 8) + vin.slice(9, 11);
}
