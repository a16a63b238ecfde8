/**
 * Column names and units as exports write them, and what a row above the data is: a names row,
 * a units row, a metadata line or a section marker.
 */
import { normaliseUnit, parseUnit } from "../units";
import { BLANK, isNumericField } from "./numbers";

export interface ColumnHeader {
  name: string;
  unit: string | null;
}

export const TIME_UNITS: Record<string, number> = {
  s: 1,
  sec: 1,
  secs: 1,
  second: 1,
  seconds: 1,
  ms: 1e-3,
  msec: 1e-3,
  us: 1e-6,
  µs: 1e-6,
  μs: 1e-6,
  "\uFFFDs": 1e-6, // µ from a Latin-1 file read as UTF-8
  usec: 1e-6,
  ns: 1e-9,
  nsec: 1e-9,
  ps: 1e-12,
  min: 60,
};

export function timeScaleOf(unit: string | null): number | undefined {
  if (unit == null) return 1;
  return TIME_UNITS[unit.trim().toLowerCase()] ?? TIME_UNITS[unit.trim()];
}

export function isTimeUnit(unit: string | null): boolean {
  return unit != null && TIME_UNITS[unit.trim().toLowerCase()] !== undefined && unit.trim().toLowerCase() !== "min";
}

/** Units of a column that numbers the samples ("Sequence" in a units row, "(#)", "pts"). */
const INDEX_UNITS = new Set([
  "sequence",
  "seq",
  "index",
  "idx",
  "#",
  "no",
  "no.",
  "n",
  "sample",
  "samples",
  "pts",
  "pt",
  "points",
  "point",
]);

/** Column names that number the samples rather than measure anything. */
const INDEX_NAMES = new Set([
  "sample",
  "samples",
  "sample no",
  "sample no.",
  "sample nr",
  "sample #",
  "sample number",
  "sample index",
  "index",
  "idx",
  "no",
  "no.",
  "nr",
  "n",
  "#",
  "point",
  "pt",
  "points",
  "sequence",
  "seq",
  "record",
  "rec",
]);

export function isIndexName(name: string): boolean {
  return INDEX_NAMES.has(name.trim().toLowerCase());
}

export function isIndexUnit(unit: string | null): boolean {
  return unit != null && INDEX_UNITS.has(unit.trim().toLowerCase());
}

/** Units that are neither SI-prefixed nor time but appear in exports' headers. */
const OTHER_UNITS = new Set([
  "%",
  "°",
  "°c",
  "°f",
  "c",
  "degc",
  "degf",
  "deg",
  "bar",
  "mbar",
  "kpa",
  "pa",
  "psi",
  "ohm",
  "ohms",
  "rpm",
  "db",
  "dbm",
  "dbv",
  "counts",
  "count",
  "codes",
  "adc",
  "lsb",
  "div",
  "g",
]);

/** Whether a field reads as a unit: "(V)", "[ms]", "Volt", "mV", "second", "Sequence", "psi". */
export function isUnitToken(field: string): boolean {
  const t = field.trim();
  if (!t || t.length > 12) return false;
  if (/^[([]\s*[^()[\]]*\s*[)\]]$/.test(t)) return true;
  const lower = t.toLowerCase();
  if (TIME_UNITS[lower] !== undefined || INDEX_UNITS.has(lower) || OTHER_UNITS.has(lower)) return true;
  const n = normaliseUnit(t);
  if (!n) return false;
  const p = parseUnit(n);
  return p.si && (n !== t || t.length <= 3);
}

/** Strips the brackets of a unit written as "(V)" or "[ms]". */
export function bareUnit(field: string): string | null {
  const u = field.trim();
  const m = /^[([]\s*([^()[\]]*)\s*[)\]]$/.exec(u);
  const bare = (m ? m[1] : u).trim();
  return bare || null;
}

export function isTimeLikeName(name: string): boolean {
  const n = name.trim().toLowerCase();
  if (n === "t" || /^time|\btime$/.test(n)) return true;
  return [
    "seconds",
    "second",
    "secs",
    "sec",
    "timestamp",
    "time stamp",
    "elapsed",
    "zeit",
    "tiempo",
    "temps",
    "tempo",
    "date",
    "datetime",
    "date time",
    "date/time",
    "date_time",
    "x",
    "x-axis",
    "x axis",
    "xaxis",
  ].includes(n);
}

/** Names an axis ("X", "x-axis") rather than a quantity: time unless its unit or values say index. */
export function isAxisName(name: string): boolean {
  return ["x", "x-axis", "x axis", "xaxis"].includes(name.trim().toLowerCase());
}

/**
 * `Channel A (V)` → { name: "Channel A", unit: "V" }; `A [kV]`; `time_ms` → { "time", "ms" };
 * `C1 in V` → { "C1", "V" }; `in s` → { "", "s" }; `U / V` → { "U", "V" }.
 */
export function parseColumnHeader(raw: string): ColumnHeader {
  const text = raw.replace(/^\uFEFF/, "").trim();
  const bracket = /^(.*?)\s*[([]\s*([^()[\]]*?)\s*[)\]]\s*$/.exec(text);
  if (bracket) return { name: bracket[1].trim() || text, unit: bracket[2] || null };
  const inUnit = /^(.*?)\s*\bin\s+(\S+)$/i.exec(text);
  if (inUnit && isUnitToken(inUnit[2])) return { name: inUnit[1].trim(), unit: inUnit[2] };
  // "quantity / unit" (DIN 1313, ISO 80000-1): a one-letter unit (`U / V`, `I / A`) only with blanks
  // round the slash, so that `Ch A/B` stays a name
  const slash = /^(.+?)(\s*)\/(\s*)([a-zA-Zµμ°%]{1,4})$/.exec(text);
  if (slash) {
    const [, name, b0, b1, unit] = slash;
    const spaced = b0.length > 0 && b1.length > 0;
    const ok = isTimeLikeName(name) ? isTimeUnit(unit) : isUnitToken(unit) && (unit.length > 1 || spaced);
    if (ok) return { name: name.trim(), unit };
  }
  const suffix = /^(.+?)_(s|ms|us|µs|μs|ns)$/i.exec(text);
  if (suffix && isTimeLikeName(suffix[1])) return { name: suffix[1], unit: suffix[2] };
  return { name: text, unit: null };
}

/** A units row: every non-empty field of the data's columns reads as a unit, and at least one is there. */
export function looksLikeUnitsRow(row: string[], from: number, to: number): boolean {
  let units = 0;
  for (let i = from; i < to; i++) {
    const f = row[i] ?? "";
    if (BLANK.test(f)) continue;
    if (!isUnitToken(f)) return false;
    units++;
  }
  return units > 0;
}

/**
 * A line that reads as metadata (`key: 12`, `key=12`, `key,12`, a comment), not as column names.
 * In a `;` file a comment line starting with ";" splits into an empty first field.
 */
export function looksLikeMetadata(row: string[], count: number, delimiter = ","): boolean {
  const first = row[0]?.trim() ?? "";
  if (/^(#|\/\/|%|;|!|\*)/.test(first)) return true;
  if (delimiter === ";" && first === "" && count > 1) return true;
  const joined = row.slice(0, count).join(" ");
  if (/[:=]\s*[-+]?[\d.,]/.test(joined)) return true;
  if (count === 2 && !isNumericField(row[0]) && isNumericField(row[1])) return true;
  // `NAME=Voltage`, `UNIT=V`, `Device: bench` (a key, then = or :, then a value)
  if (/^[A-Za-z_][\w .()/-]{0,40}?\s*[=:]\s*\S/.test(first)) return true;
  return false;
}

/** A line that opens the data section rather than naming columns ("Waveform Data", "[Data]", "DATA:"). */
export function isSectionMarker(row: string[], count: number): boolean {
  const fields = row.slice(0, count).filter((f) => !BLANK.test(f));
  if (fields.length !== 1) return false;
  const t = fields[0].trim().toLowerCase();
  if (/^\[[^\]]*\]$/.test(t)) return true;
  return (
    /^(#\s*)?((waveform|wave|sample|raw|measured|curve)\s*)?(data|values|points|samples)(\s*(points|values|section|start|begin|follows))?\s*:?$/.test(
      t,
    ) || /^(begin|start)\s*(of\s*)?data$/.test(t)
  );
}

/** Names that say "a value" without naming the channel; the channel's name is then taken from metadata. */
export function isGenericValueName(name: string): boolean {
  return ["value", "values", "y", "data", "amplitude", "ampl", "voltage", "signal", "level", "volt", "volts"].includes(
    name.trim().toLowerCase(),
  );
}
