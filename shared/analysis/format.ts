/** Number formatting for messages (not for stored values, which stay numbers). */
export function fmt(x: number, digits = 3): string {
  if (!Number.isFinite(x)) return String(x);
  const a = Math.abs(x);
  if (a !== 0 && (a >= 1e6 || a < 1e-3)) return x.toExponential(digits - 1);
  return String(Number(x.toPrecision(digits)));
}

export function fmtTime(s: number): string {
  const a = Math.abs(s);
  if (a >= 1) return `${fmt(s)} s`;
  if (a >= 1e-3) return `${fmt(s * 1e3)} ms`;
  if (a >= 1e-6) return `${fmt(s * 1e6)} µs`;
  return `${fmt(s * 1e9)} ns`;
}

export function fmtRate(r: number): string {
  if (r >= 1e6) return `${fmt(r / 1e6)} MS/s`;
  if (r >= 1e3) return `${fmt(r / 1e3)} kS/s`;
  return `${fmt(r)} S/s`;
}
