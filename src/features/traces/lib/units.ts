/** Unit handling and SI formatting for the viewer's readouts and axes. No React, no DOM. */

const PREFIXES: { p: string; f: number }[] = [
  { p: "G", f: 1e9 },
  { p: "M", f: 1e6 },
  { p: "k", f: 1e3 },
  { p: "", f: 1 },
  { p: "m", f: 1e-3 },
  { p: "µ", f: 1e-6 },
  { p: "n", f: 1e-9 },
  { p: "p", f: 1e-12 },
];

/** Units that take SI prefixes. */
const SI_BASES = ["V", "A", "s", "Hz", "W", "Ω", "F", "H"];

export interface ParsedUnit {
  /** the SI base ("V") or the unit as given when it is not an SI unit ("psi") */
  base: string;
  /** multiply a value in the given unit by this to get the base unit (mV → 1e-3) */
  scale: number;
  si: boolean;
}

/** "mV" → { base: "V", scale: 1e-3 }; "uA" and "µA" both mean micro; null or "" → volts. */
export function parseUnit(unit: string | null | undefined): ParsedUnit {
  const u = (unit ?? "").trim();
  if (!u) return { base: "V", scale: 1, si: true };
  if (SI_BASES.includes(u)) return { base: u, scale: 1, si: true };
  const first = u[0] === "u" || u[0] === "μ" ? "µ" : u[0];
  const rest = u.slice(1);
  const pre = PREFIXES.find((x) => x.p === first && x.p !== "");
  if (pre && SI_BASES.includes(rest)) return { base: rest, scale: pre.f, si: true };
  return { base: u, scale: 1, si: false };
}

function trimZeros(s: string): string {
  return s.includes(".") ? s.replace(/\.?0+$/, "") : s;
}

export interface FormatOptions {
  /** digits after the decimal point of the prefixed mantissa, trailing zeros trimmed (default 2) */
  decimals?: number;
  /** keep trailing zeros (axis labels) */
  fixed?: boolean;
}

/**
 * Formats a value in an SI base unit with the prefix that puts the mantissa in [1, 1000):
 * formatSI(0.0015, "s") → "1.5 ms", formatSI(666.666, "Hz") → "666.67 Hz".
 */
export function formatSI(value: number, base: string, opts: FormatOptions = {}): string {
  const decimals = opts.decimals ?? 2;
  if (!Number.isFinite(value)) return "—";
  if (value === 0) return `0 ${base}`.trim();
  const abs = Math.abs(value);
  let i = PREFIXES.findIndex((x) => abs >= x.f * 0.9999999);
  if (i < 0) i = PREFIXES.length - 1;
  let mant = value / PREFIXES[i].f;
  // rounding may carry into the next prefix (999.999 → 1000.00 → 1 k)
  if (Math.abs(Number(mant.toFixed(decimals))) >= 1000 && i > 0) {
    i -= 1;
    mant = value / PREFIXES[i].f;
  }
  let s = mant.toFixed(decimals);
  if (!opts.fixed) s = trimZeros(s);
  if (s === "-0") s = "0";
  return `${s} ${PREFIXES[i].p}${base}`.trim();
}

/** A value given in `unit` (e.g. "mV", "V", null = volts), formatted with a suitable prefix. */
export function formatInUnit(value: number, unit: string | null | undefined, opts: FormatOptions = {}): string {
  const u = parseUnit(unit);
  if (!u.si) {
    if (!Number.isFinite(value)) return "—";
    const s = value.toFixed(opts.decimals ?? 2);
    return `${opts.fixed ? s : trimZeros(s)} ${u.base}`;
  }
  return formatSI(value * u.scale, u.base, opts);
}

export const formatTime = (seconds: number, opts?: FormatOptions) => formatSI(seconds, "s", opts);
export const formatFrequency = (hz: number, opts?: FormatOptions) => formatSI(hz, "Hz", opts);

/**
 * The physical quantity behind the scope's volts, when the probe has a known scale:
 * capacitive secondary pickup with kV per volt → kV at the plug; current clamp with mV per amp → A.
 * Returns the factor from the channel's unit to the quantity, or null.
 */
export function probeScale(
  settings: { probe?: string; kvPerVolt?: number; mvPerAmp?: number } | undefined,
  channelUnit: string | null | undefined,
): { factor: number; unit: string; label: string } | null {
  if (!settings) return null;
  const u = parseUnit(channelUnit);
  if (!u.si || u.base !== "V") return null;
  if (settings.kvPerVolt && settings.kvPerVolt > 0 && (settings.probe === undefined || settings.probe === "capacitive-secondary")) {
    // value[unit] · scale → volts at the pickup · kvPerVolt → kV at the plug
    return { factor: u.scale * settings.kvPerVolt, unit: "kV", label: "at the plug" };
  }
  if (settings.probe === "current-clamp" && settings.mvPerAmp && settings.mvPerAmp > 0) {
    return { factor: (u.scale * 1000) / settings.mvPerAmp, unit: "A", label: "clamp current" };
  }
  return null;
}

/** Formats a value in a scaled quantity's unit ("kV" is an SI-prefixed volt). */
export function formatScaled(value: number, unit: string, opts?: FormatOptions): string {
  return formatInUnit(value, unit, opts);
}

/**
 * Labels for evenly spaced grid values: the prefix follows each value, and the decimals are the
 * fewest that show every value to a thousandth of the step (so 18.5 ms stays "18.5 ms" and deep
 * zooms far from zero stay distinct). Values are in `unit` (e.g. "s", "V", "mV").
 */
export function formatTicks(values: number[], step: number, unit: string | null | undefined): string[] {
  const u = parseUnit(unit);
  const stepBase = Math.abs(step * u.scale);
  return values.map((v) => {
    const x = v * u.scale;
    if (Math.abs(x) < stepBase * 1e-6) return `0 ${u.base}`;
    if (!u.si) {
      for (let d = 0; d <= 6; d++) if (Math.abs(Number(x.toFixed(d)) - x) <= stepBase * 1e-3) return `${trimZeros(x.toFixed(d))} ${u.base}`;
      return `${x} ${u.base}`;
    }
    const abs = Math.abs(x);
    let i = PREFIXES.findIndex((p) => abs >= p.f * 0.9999999);
    if (i < 0) i = PREFIXES.length - 1;
    const f = PREFIXES[i].f;
    for (let d = 0; d <= 6; d++) {
      const m = Number((x / f).toFixed(d));
      if (Math.abs(m * f - x) <= stepBase * 1e-3) return `${trimZeros((x / f).toFixed(d))} ${PREFIXES[i].p}${u.base}`;
    }
    return `${trimZeros((x / f).toFixed(6))} ${PREFIXES[i].p}${u.base}`;
  });
}
