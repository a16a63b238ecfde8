/**
 * Units in the trace views (the viewer, the report's figures, the settings summary; client-wide so no
 * feature imports another): the shared unit model (shared/trace/units: the file unit, the scope unit the
 * tech typed the settings in, the physical unit every view shows) and the formatting of time and
 * levels. The viewer shows levels in the channel's physical unit and nothing else: kV at the plug
 * for a pickup with a kV/V scale or a file in kV, amperes through a clamp, volts at the scope
 * otherwise. Level values keep that unit (no re-prefixing: a 10 kV/V capture reads "0.5 kV", never
 * "500 V", so it cannot be mistaken for pickup volts); time and frequency take SI prefixes.
 * No React, no DOM.
 */
import type { TraceChannelMeta } from "../../shared/trace/types";
import {
  channelUnits,
  formatQuantity,
  parseUnit,
  type ChannelUnits,
  type UnitSettings,
} from "../../shared/trace/units";

export {
  channelUnits,
  formatQuantity,
  normaliseUnit,
  parseUnit,
  scopeSetting,
  type ChannelUnits,
} from "../../shared/trace/units";

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

/** A value given in `unit` (e.g. "mV", "V", null = volts), formatted with a suitable SI prefix. */
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
 * A level in the display unit. A base unit (V, A) takes SI prefixes like any readout ("151.28 mV",
 * "2 kA"); a prefixed display unit (kV at the plug) is kept, with `digits` significant figures and
 * thousands grouped from 1000 up, so that a pickup capture never shows "500 V" beside "7.8 kV":
 * (7.834, "kV") → "7.83 kV", (0.0151, "kV") → "0.0151 kV", (0.25, "V") → "250 mV".
 */
export function formatLevel(value: number, unit: string, digits = 3): string {
  if (!Number.isFinite(value)) return "—";
  if (!keepsUnit(unit)) return formatInUnit(value, unit);
  const a = Math.abs(value);
  if (a < 1e-12) return `0 ${unit}`;
  if (a >= 1000) return `${Math.round(value).toLocaleString("en-US")} ${unit}`;
  const decimals = Math.min(12, Math.max(0, digits - 1 - Math.floor(Math.log10(a))));
  const s = trimZeros(value.toFixed(decimals));
  return `${s === "-0" ? "0" : s} ${unit}`;
}

/** Levels in this unit are shown in it, without re-prefixing (a prefixed unit such as kV). */
export function keepsUnit(unit: string): boolean {
  const u = parseUnit(unit);
  return u.si && u.scale !== 1;
}

/** A level step per division in the display unit: "0.5 kV/div", "5 A/div". */
export function formatPerDivLevel(step: number, unit: string): string {
  return `${formatLevel(step, unit)}/div`;
}

/**
 * Labels for evenly spaced grid values: the prefix follows each value ("s", "V", "A"), except in a
 * prefixed display unit (kV), which every label keeps. The decimals are the fewest that show every value to a
 * thousandth of the step (so 18.5 ms stays "18.5 ms" and deep zooms far from zero stay distinct).
 */
export function formatTicks(values: number[], step: number, unit: string | null | undefined): string[] {
  if (unit && keepsUnit(unit)) return fixedTicks(values, step, unit);
  const u = parseUnit(unit);
  const stepBase = Math.abs(step * u.scale);
  return values.map((v) => {
    const x = v * u.scale;
    if (Math.abs(x) < stepBase * 1e-6) return `0 ${u.base}`;
    if (!u.si) return plainTick(x, stepBase, u.base);
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

function plainTick(x: number, step: number, unit: string): string {
  for (let d = 0; d <= 9; d++)
    if (Math.abs(Number(x.toFixed(d)) - x) <= step * 1e-3) return `${trimZeros(x.toFixed(d))} ${unit}`;
  return `${x} ${unit}`;
}

function fixedTicks(values: number[], step: number, unit: string): string[] {
  const s = Math.abs(step);
  return values.map((v) => (Math.abs(v) < s * 1e-6 ? `0 ${unit}` : plainTick(v, s, unit)));
}

/** The settings the unit model reads, from a trace's capture settings (checked by the server at upload). */
function unitSettings(settings: object | undefined): UnitSettings {
  const s = (settings ?? {}) as Record<string, unknown>;
  const num = (x: unknown) => (typeof x === "number" ? x : undefined);
  return {
    probe: typeof s.probe === "string" ? s.probe : undefined,
    kvPerVolt: num(s.kvPerVolt),
    mvPerAmp: num(s.mvPerAmp),
  };
}

/** The unit model of a trace's channel (the first by default). */
export function traceUnits(
  trace: { channels: { unit: string | null }[]; settings?: object },
  channel = 0,
): ChannelUnits {
  return channelUnits(trace.channels[channel]?.unit ?? null, unitSettings(trace.settings));
}

/** The unit model several traces share (a comparison across them is shown in it), or null when they differ. */
export function sharedUnits(traces: { channels: { unit: string | null }[]; settings?: object }[]): ChannelUnits | null {
  const all = traces.map((t) => traceUnits(t));
  return all.length && all.every((u) => u.unit === all[0].unit) ? all[0] : null;
}

export { toPhysical } from "./physical-units";

/** "ΔV" for voltages, "ΔA" for currents, "Δ" for anything else. */
export function deltaLabel(cu: Pick<ChannelUnits, "unit">): string {
  const base = parseUnit(cu.unit).base;
  return base === "V" || base === "A" ? `Δ${base}` : "Δ";
}

/** A level of the channel in its physical unit, with SI prefixes kept off: see formatLevel. */
export function formatPhysical(value: number, cu: ChannelUnits, digits = 3): string {
  return formatLevel(value, cu.unit, digits);
}

export { formatQuantity as formatWithPrefix };

/** What the units of a trace are and where they come from, in a sentence (the trace's details). */
export function unitSentence(
  cu: ChannelUnits,
  channel?: Pick<TraceChannelMeta, "unitWritten" | "scaledFrom" | "unitFrom">,
): string {
  const shown =
    cu.source === "file" && cu.quantity === "other"
      ? `Levels are shown in ${cu.unit}, as exported.`
      : `Levels are shown in ${cu.unit} ${cu.label}.`;
  const parts = [shown];
  if (cu.note) parts.push(cu.note);
  if (channel?.unitWritten) parts.push(`The file writes the unit as “${channel.unitWritten}”.`);
  if (channel?.unitFrom === "metadata") parts.push("The unit was read from the file's header lines.");
  if (channel?.scaledFrom) parts.push(`Values: ${channel.scaledFrom}.`);
  return parts.join(" ");
}
