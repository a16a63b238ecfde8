/**
 * Numbers as exports write them: decimal notation with an optional exponent, a decimal comma, the
 * infinity an export writes for an over-range sample, and row shapes (how many fields, which are
 * numbers). Pure code shared by every stage of the CSV reader.
 */

export const BLANK = /^\s*$/;
const DECIMAL_COMMA = /^\s*[-+]?(\d+,\d*|,\d+)([eE][-+]?\d+)?\s*$/;
/** A decimal number with an optional exponent (ECMA-262 StrDecimalLiteral without Infinity). */
export const DECIMAL = /^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*$/;
/** An over-range sample as exports write it: "∞", "-∞", "inf", "+Inf", "-Infinity". */
const INFINITE = /^\s*([-+]?)\s*(\u221e|inf|infinity)\s*$/i;

/** A missing sample as exports write it: "NaN", "-nan", "nan(ind)" (not a number). */
const MISSING = /^\s*[-+]?nan(\(\w*\))?\s*$/i;

/** A field written as NaN: a missing sample (a gap in the record, or a sample the scope could not read). */
export function isMissingField(s: string): boolean {
  return MISSING.test(s);
}

/** Largest magnitude a value column holds: the largest finite float32, (2 − 2⁻²³)·2¹²⁷ (IEEE 754 binary32). */
export const MAX_FLOAT32 = 3.4028234663852886e38;

/**
 * A field as a number: NaN when it is not one, undefined when it is empty.
 *
 * `+s` is the fast path, but it also reads hexadecimal, binary and octal literals ("0x1A" → 26,
 * "0b101", "0o17"); those start with 0 and a letter (no sign, maybe after white space), so a field
 * starting with "0" and a letter, or with white space, is checked against the decimal pattern.
 */
export function fieldNumber(s: string): number | undefined {
  const v = +s;
  if (v - v === 0) {
    if (v === 0 && BLANK.test(s)) return undefined;
    const c0 = s.charCodeAt(0);
    if (c0 === 48 /* 0 */ ? s.length > 2 && (s.charCodeAt(1) | 32) >= 97 : c0 <= 32 || c0 >= 127) {
      return DECIMAL.test(s) ? v : NaN;
    }
    return v;
  }
  // "1e400": a decimal number beyond double precision; the caller refuses it as out of range
  if (v === Infinity || v === -Infinity) return DECIMAL.test(s) ? v : NaN;
  return slowNumber(s);
}

function slowNumber(s: string): number | undefined {
  if (BLANK.test(s)) return undefined;
  if (DECIMAL_COMMA.test(s)) {
    const v = +s.replace(",", ".");
    if (v - v === 0) return v;
  }
  return NaN;
}

/** +1 or −1 for a field that writes an over-range sample as infinity ("∞", "-inf"), else 0. */
export function infiniteSign(s: string): 1 | -1 | 0 {
  const m = INFINITE.exec(s);
  if (!m) return 0;
  return m[1] === "-" ? -1 : 1;
}

export function isNumericField(s: string): boolean {
  const v = fieldNumber(s);
  return v !== undefined && v === v;
}

/** Column count without trailing empty fields (a trailing delimiter is common in exports). */
export function effectiveCount(row: string[]): number {
  let n = row.length;
  while (n > 0 && BLANK.test(row[n - 1])) n--;
  return n;
}

export function isNumericRow(row: string[], count: number): boolean {
  if (count === 0) return false;
  for (let i = 0; i < count; i++) if (!isNumericField(row[i])) return false;
  return true;
}
