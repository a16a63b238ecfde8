/**
 * Numbers for the measurement tables, "—" for none:
 * - below 1000 in magnitude: `digits` significant digits (3 by default): 12.35 → "12.3", 0.000123 → "0.000123";
 * - from 1000 up to 1e9: the whole number, rounded half away from zero, with thousands grouping:
 *   1726.25 → "1,726", 12345.6 → "12,346", 99999.5 → "100,000", 100000 → "100,000";
 * - from 1e9 up, and below 1e-4 (but not a residue below 1e-7, which reads as "0"): exponent form.
 */
export function fmtNum(x: number | null | undefined, digits = 3): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return "—";
  const a = Math.abs(x);
  // a residue of floating-point arithmetic (a baseline of 1e-9 V) reads as zero
  if (a < 1e-7) return "0";
  if (a >= 1e9 || a < 1e-4) return x.toExponential(2);
  if (a >= 1000) return x.toLocaleString("en-US", { maximumFractionDigits: 0 });
  const rounded = Number(x.toPrecision(digits));
  // 999.7 rounds to 1000 at three digits: then it is a whole number like the others from 1000 up
  if (Math.abs(rounded) >= 1000) return rounded.toLocaleString("en-US", { maximumFractionDigits: 0 });
  return rounded.toLocaleString("en-US", { maximumFractionDigits: 20 });
}

export function fmtWithUnit(x: number | null | undefined, unit: string, digits = 3): string {
  const s = fmtNum(x, digits);
  return s === "—" || !unit ? s : `${s} ${unit}`;
}

/** Seconds in the most readable unit. */
export function fmtSeconds(s: number | null | undefined): string {
  if (s === null || s === undefined || !Number.isFinite(s)) return "—";
  const a = Math.abs(s);
  if (a >= 1) return `${fmtNum(s)} s`;
  if (a >= 1e-3) return `${fmtNum(s * 1e3)} ms`;
  if (a >= 1e-6) return `${fmtNum(s * 1e6)} µs`;
  return `${fmtNum(s * 1e9)} ns`;
}

export function fmtHz(f: number | null | undefined): string {
  if (f === null || f === undefined || !Number.isFinite(f)) return "—";
  if (f >= 1e6) return `${fmtNum(f / 1e6)} MHz`;
  if (f >= 1e3) return `${fmtNum(f / 1e3)} kHz`;
  return `${fmtNum(f)} Hz`;
}
