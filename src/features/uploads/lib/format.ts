/** Engineering formatting for the preview and the settings (SI prefixes, a few significant digits). */
export function si(value: number, unit: string, digits = 3): string {
  if (!Number.isFinite(value)) return "—";
  if (value === 0) return `0 ${unit}`;
  const prefixes: [number, string][] = [
    [1e9, "G"],
    [1e6, "M"],
    [1e3, "k"],
    [1, ""],
    [1e-3, "m"],
    [1e-6, "µ"],
    [1e-9, "n"],
  ];
  const a = Math.abs(value);
  const [f, p] = prefixes.find(([f]) => a >= f * 0.9995) ?? prefixes[prefixes.length - 1];
  return `${Number((value / f).toPrecision(digits))} ${p}${unit}`;
}

export function count(n: number): string {
  return n.toLocaleString("en-US");
}

/** Round up to 1, 2 or 5 × 10ⁿ (the steps of a scope's knobs). */
export function step125(x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) return 1;
  const e = Math.floor(Math.log10(x));
  const base = 10 ** e;
  const m = x / base;
  const s = m <= 1.000001 ? 1 : m <= 2.000001 ? 2 : m <= 5.000001 ? 5 : 10;
  return Number((s * base).toPrecision(6));
}
