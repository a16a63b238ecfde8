/**
 * One unit model for a channel, used by every view of a trace (plot axis, cursor readouts, marks,
 * overlay, measurement and comparison tables, capture-review messages, report, casebook, CLI).
 *
 * Three units matter for a channel:
 * - the **file unit**: what the export's header says the stored numbers are in ("mV", "V", "kV",
 *   "A", or nothing, which means volts);
 * - the **scope unit**: the unit the tech types the scope's settings in (volts/division, trigger
 *   level, ground offset). Volts at the scope input, except when the file itself states kV or
 *   amperes: then the scope already applied the probe's scale and showed kV or A per division;
 * - the **physical unit**: what the tech thinks in — kV at the plug when a capacitive pickup's kV/V
 *   scale is known, amperes through a clamp's mV/A scale, or what the header already states (a header
 *   in kV or A is never scaled again).
 *
 * Pure code: no DOM, no Node.
 */

/** A unit string split into its SI base and the factor from the unit to the base ("mV" → V, 1e-3). */
export interface ParsedUnit {
  /** the SI base ("V", "A") or the unit as given when it is not an SI unit ("psi", "%") */
  base: string;
  /** multiply a value in the given unit by this to get the base unit */
  scale: number;
  si: boolean;
}

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

/** Words that exports write instead of symbols ("Volt", "Volts", "mVolt", "Amps", "kilovolts"). */
const WORDS: Record<string, string> = {
  v: "V",
  volt: "V",
  volts: "V",
  mv: "mV",
  mvolt: "mV",
  mvolts: "mV",
  millivolt: "mV",
  millivolts: "mV",
  uv: "µV",
  µv: "µV",
  μv: "µV",
  kv: "kV",
  kvolt: "kV",
  kvolts: "kV",
  kilovolt: "kV",
  kilovolts: "kV",
  a: "A",
  amp: "A",
  amps: "A",
  ampere: "A",
  amperes: "A",
  ma: "mA",
  milliamp: "mA",
  milliamps: "mA",
  ka: "kA",
};

/**
 * Normalises a unit as written in a file or typed by a user: "Volt" → "V", "mv" → "mV",
 * "(kV)" → "kV", "uA" → "µA"; an empty or missing unit stays null (volts are assumed by readers).
 * Anything else is returned trimmed, as given.
 */
export function normaliseUnit(unit: string | null | undefined): string | null {
  if (unit == null) return null;
  const u = unit
    .trim()
    .replace(/^[([]\s*/, "")
    .replace(/\s*[)\]]$/, "")
    .trim();
  if (!u) return null;
  const word = WORDS[u.toLowerCase()];
  if (word) {
    // keep case-significant SI symbols as written when they are already correct ("MV" is megavolts)
    if (u === "MV" || u === "MA") return u;
    return word;
  }
  if ((u[0] === "u" || u[0] === "μ") && SI_BASES.includes(u.slice(1))) return `µ${u.slice(1)}`;
  return u;
}

/** "mV" → { base: "V", scale: 1e-3 }; "uA" and "µA" both mean micro; null or "" → volts. */
export function parseUnit(unit: string | null | undefined): ParsedUnit {
  const u = normaliseUnit(unit);
  if (!u) return { base: "V", scale: 1, si: true };
  if (SI_BASES.includes(u)) return { base: u, scale: 1, si: true };
  const pre = PREFIXES.find((x) => x.p !== "" && x.p === u[0]);
  const rest = u.slice(1);
  if (pre && SI_BASES.includes(rest)) return { base: rest, scale: pre.f, si: true };
  return { base: u, scale: 1, si: false };
}

export type Quantity = "voltage" | "current" | "other";

/** Where the physical scale comes from. */
export type UnitSource =
  /** the file's header states the physical unit (kV, A…): not scaled again */
  | "file"
  /** volts at the scope × the capacitive pickup's kV/V */
  | "pickup"
  /** volts at the scope ÷ the current clamp's mV/A */
  | "clamp"
  /** volts at the scope, no probe scale known */
  | "scope";

export interface UnitSettings {
  probe?: string;
  /** capacitive pickup scale: kV at the plug per volt at the scope */
  kvPerVolt?: number;
  /** current clamp scale: millivolts per ampere */
  mvPerAmp?: number;
}

export interface ChannelUnits {
  /** the unit the file states for the stored numbers, normalised; null means volts */
  fileUnit: string | null;
  /** the unit of the scope's settings (volts/division, trigger level): "V", "kV", "A", or the file's */
  scopeUnit: string;
  /** multiply a stored value by this to get scope units */
  scopeFromFile: number;
  quantity: Quantity;
  /** the unit every view shows: "kV" at the plug, "V" at the scope, "A", or the file's own */
  unit: string;
  /** multiply a stored value by this to get the physical unit */
  fromFile: number;
  /** physical units per scope unit: kvPerVolt, 1000 / mvPerAmp, or 1 */
  perScope: number;
  source: UnitSource;
  /** a few words for labels: "at the plug", "clamp current", "at the scope", "as exported" */
  label: string;
  /** a sentence for the trace's details when something was (not) applied, or null */
  note: string | null;
}

function positive(x: number | undefined): x is number {
  return typeof x === "number" && Number.isFinite(x) && x > 0;
}

/**
 * The unit model of one channel, from the unit its file states and the capture settings.
 *
 * Examples (checked in tests/unit/trace/units.test.ts):
 * - file "V", capacitive pickup 10 kV/V → scope V, shown in kV, 1 V → 10 kV;
 * - file "mV", pickup 10 kV/V → scope V (1 mV = 0.001 V), shown in kV, 1 mV → 0.01 kV;
 * - file "kV", pickup 10 kV/V → scope kV, shown in kV, not scaled again (note says so);
 * - file "V", clamp 100 mV/A → scope V, shown in A, 1 V → 10 A;
 * - file "A", clamp 100 mV/A → scope A, shown in A, not scaled again.
 */
export function channelUnits(fileUnit: string | null | undefined, settings: UnitSettings = {}): ChannelUnits {
  const file = normaliseUnit(fileUnit);
  const u = parseUnit(file);
  const probe = settings.probe;
  const pickup = positive(settings.kvPerVolt) && (probe === undefined || probe === "capacitive-secondary");
  const clamp = probe === "current-clamp";

  if (!u.si || (u.base !== "V" && u.base !== "A")) {
    const unit = file ?? "V";
    return {
      fileUnit: file,
      scopeUnit: unit,
      scopeFromFile: 1,
      quantity: "other",
      unit,
      fromFile: 1,
      perScope: 1,
      source: "file",
      label: "as exported",
      note: null,
    };
  }

  if (u.base === "A") {
    // the scope showed amperes (clamp scale set on the scope): settings are in A
    return {
      fileUnit: file,
      scopeUnit: "A",
      scopeFromFile: u.scale,
      quantity: "current",
      unit: "A",
      fromFile: u.scale,
      perScope: 1,
      source: "file",
      label: "clamp current",
      note: positive(settings.mvPerAmp)
        ? `The file states ${file}, so the clamp scale (${settings.mvPerAmp} mV/A) is not applied again.`
        : null,
    };
  }

  if (u.scale >= 1e3) {
    // kV (or larger) at the plug: the scope already applied the pickup's scale
    return {
      fileUnit: file,
      scopeUnit: file as string,
      scopeFromFile: 1,
      quantity: "voltage",
      unit: file as string,
      fromFile: 1,
      perScope: 1,
      source: "file",
      label: "at the plug",
      note: pickup
        ? `The file states ${file}, so the pickup scale (${settings.kvPerVolt} kV/V) is not applied again.`
        : null,
    };
  }

  // volts (or mV, µV) at the scope input
  if (pickup) {
    const k = settings.kvPerVolt as number;
    return {
      fileUnit: file,
      scopeUnit: "V",
      scopeFromFile: u.scale,
      quantity: "voltage",
      unit: "kV",
      fromFile: u.scale * k,
      perScope: k,
      source: "pickup",
      label: "at the plug",
      note: `Volts at the scope × ${k} kV/V (pickup scale) = kV at the plug.`,
    };
  }
  if (clamp && positive(settings.mvPerAmp)) {
    const perScope = 1000 / settings.mvPerAmp;
    return {
      fileUnit: file,
      scopeUnit: "V",
      scopeFromFile: u.scale,
      quantity: "current",
      unit: "A",
      fromFile: u.scale * perScope,
      perScope,
      source: "clamp",
      label: "clamp current",
      note: `Volts at the scope ÷ ${settings.mvPerAmp} mV/A (clamp scale) = amperes.`,
    };
  }
  return {
    fileUnit: file,
    scopeUnit: "V",
    scopeFromFile: u.scale,
    quantity: clamp ? "current" : "voltage",
    unit: "V",
    fromFile: u.scale,
    perScope: 1,
    source: "scope",
    label: "at the scope",
    note: clamp ? "No clamp scale was given, so values stay in volts at the scope." : null,
  };
}

function trimZeros(s: string): string {
  return s.includes(".") ? s.replace(/\.?0+$/, "") : s;
}

/**
 * Formats a value given in `unit` with the SI prefix that puts the mantissa in [1, 1000) and
 * `digits` significant figures (default 3): (7.834, "kV") → "7.83 kV", (0.15128, "V") → "151 mV",
 * (250, "A") → "250 A". Non-SI units are printed as given.
 */
export function formatQuantity(value: number, unit: string | null | undefined, digits = 3): string {
  if (!Number.isFinite(value)) return "—";
  const u = parseUnit(unit);
  if (!u.si) return `${trimZeros(value.toPrecision(digits))} ${u.base}`;
  const x = value * u.scale;
  if (x === 0) return `0 ${u.base}`;
  let i = PREFIXES.findIndex((p) => Math.abs(x) >= p.f * 0.9999999);
  if (i < 0) i = PREFIXES.length - 1;
  let m = Number((x / PREFIXES[i].f).toPrecision(digits));
  if (Math.abs(m) >= 1000 && i > 0) {
    i -= 1;
    m = Number((x / PREFIXES[i].f).toPrecision(digits));
  }
  const s = trimZeros(String(m));
  return `${s === "-0" ? "0" : s} ${PREFIXES[i].p}${u.base}`;
}

/**
 * A scope setting in the units the tech sets on the scope, with the physical value beside it when
 * the two differ: (2, cu for 10 kV/V, "div") → "2 V/div on the scope (20 kV/div at the plug)";
 * (0.3, same) → "0.3 V on the scope (3 kV at the plug)"; with a kV file → "3 kV".
 */
export function scopeSetting(valueInScopeUnits: number, cu: ChannelUnits, per: "div" | null = null): string {
  const suffix = per ? `/${per}` : "";
  const scope = `${formatQuantity(valueInScopeUnits, cu.scopeUnit)}${suffix}`;
  if (cu.perScope === 1 && parseUnit(cu.unit).base === parseUnit(cu.scopeUnit).base) return scope;
  const physical = `${formatQuantity(valueInScopeUnits * cu.perScope, cu.unit)}${suffix}`;
  return `${scope} on the scope (${physical} ${cu.label})`;
}
