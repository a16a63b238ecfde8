/** Numbers for the measurement tables: a few significant digits, thin grouping, "—" for none. */
export function fmtNum(x: number | null | undefined, digits = 3): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return "—";
  const a = Math.abs(x);
  // a residue of floating-point arithmetic (a baseline of 1e-9 V) reads as zero
  if (a < 1e-7) return "0";
  if (a >= 1e5 || a < 1e-4) return x.toExponential(2);
  if (Number.isInteger(x) && a < 1e5) return x.toLocaleString("en-US");
  return Number(x.toPrecision(digits)).toLocaleString("en-US", { maximumFractionDigits: 6 });
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
