/**
 * What the lines around the data say about the capture: the sample interval or rate, the time of the
 * first sample, the channel's name and unit, the vertical scale and a scale per ADC code. Read from
 * preamble lines (`Sample interval: 1e-6`, `#Sample rate: 160000Hz`, `Time interval :,0.08uS`,
 * `SAMPLE_RATE=1000`), from key/value columns beside the data, and from names in a header row whose
 * values stand in the row below it (`Start,Increment` over `-1e-5,2e-9`).
 */
import { normaliseUnit } from "../units";
import { TIME_UNITS } from "./header";
import { BLANK, effectiveCount } from "./numbers";
import { quote } from "./words";

const RATE_UNITS: Record<string, number> = {
  hz: 1,
  khz: 1e3,
  mhz: 1e6,
  ghz: 1e9,
  "s/s": 1,
  "sa/s": 1,
  "ks/s": 1e3,
  "ksa/s": 1e3,
  "ms/s": 1e6,
  "msa/s": 1e6,
  "gs/s": 1e9,
  "gsa/s": 1e9,
  sps: 1,
  ksps: 1e3,
  msps: 1e6,
};

/**
 * The number at the start of a metadata value: digits with `.` `,` and (only between digits)
 * spaces, then an optional exponent; the unit follows.
 */
const METADATA_NUMBER =
  /^([-+]?)((?:\d|[.,](?=\d))(?:[\d.,]|[ \u00a0\u2009\u202f](?=\d))*)([eE][-+]?\d+)?\s*([a-zA-Zµμ\uFFFD/]*)/;

/** Keys that give the time between samples. */
const INTERVAL_KEY = new RegExp(
  [
    "sampl\\w*?[\\s_]*(interval|period|increment|step|time)",
    "x[\\s_]*increment",
    "\\bxinc\\b",
    "^(dt|dx|ts)\\b",
    "^delta[\\s_]*[tx]\\b",
    "^interval\\b",
    "^increment\\b",
    "^clock\\b",
    "time[\\s_]*(interval|step|increment|resolution)",
    "^time[\\s_]*per[\\s_]*(sample|point)",
    "^h(oriz\\w*)?[\\s_]*resolution\\b",
    "^(log(ging)?|scan|record(ing)?|measurement|measuring|acquisition|data)[\\s_]*interval\\b",
  ].join("|"),
  "i",
);
/** Keys that give the number of samples per second. */
const RATE_KEY =
  /(sampl\w*?[\s_]*(rate|frequency|freq)|^fs\b|^(scan|logging|acquisition|record(ing)?)[\s_]*(rate|frequency)\b)/i;

/** Comment marks and quotes at the start of a metadata line. */
const LEAD = /^[\s#;%!*/"']+/;

/**
 * Reads the mantissa of a metadata number, with digit grouping. Accepted: plain digits; one `.` or
 * `,` as the decimal sign ("2,5", "0.001"); thousands groups of three digits separated by `,` with
 * an optional `.` decimal part ("1,000,000", "1,000.5"), by `.` with an optional `,` decimal part
 * ("1.000.000", "1.000,5"), or by a space ("1 000 000"; ISO 80000-1 §7.3.1 groups digits in threes
 * with a space). One separator followed by exactly three digits ("1,000", "1.000") is ambiguous —
 * a decimal sign or a thousands group — and is refused, as is anything else.
 */
function groupedNumber(mantissa: string, hasExponent: boolean): number | "ambiguous" | undefined {
  if (/^\d+$/.test(mantissa)) return +mantissa;
  const single = /^(\d*)([.,])(\d*)$/.exec(mantissa);
  if (single) {
    if (single[1] === "" && single[3] === "") return undefined;
    if (!hasExponent && /^[1-9]\d{0,2}$/.test(single[1]) && single[3].length === 3) return "ambiguous";
    return +`${single[1] || "0"}.${single[3] || "0"}`;
  }
  if (hasExponent) return undefined;
  let m = /^(\d{1,3}(?:,\d{3})+)(?:\.(\d+))?$/.exec(mantissa);
  if (m) return +`${m[1].replace(/,/g, "")}.${m[2] ?? "0"}`;
  m = /^(\d{1,3}(?:\.\d{3})+)(?:,(\d+))?$/.exec(mantissa);
  if (m) return +`${m[1].replace(/\./g, "")}.${m[2] ?? "0"}`;
  m = /^(\d{1,3}(?:[ \u00a0\u2009\u202f]\d{3})+)(?:[.,](\d+))?$/.exec(mantissa);
  if (m) return +`${m[1].replace(/[ \u00a0\u2009\u202f]/g, "")}.${m[2] ?? "0"}`;
  return undefined;
}

/** A number with its unit at the start of a value ("0.08uS", "40.00mV", "1,000,000 Hz"), or why not. */
type ValueRead = { value: number; unit: string } | { unreadable: string } | undefined;

function readValue(rest: string): ValueRead {
  // "Analog:1.00E-06", "CH1: 2e-6": a label before the number
  const text = rest.replace(/^[A-Za-z][A-Za-z ]*\d*\s*:\s*(?=[-+.\d])/, "");
  // a date or a time of day is not a quantity ("Sample time: 2022-06-06 18:43")
  if (/^\d{1,4}[-/:]\d/.test(text)) return undefined;
  const num = METADATA_NUMBER.exec(text);
  if (!num) return undefined;
  const shown = quote(text);
  // more digits after the number and its unit ("1 5 MHz", "1,5 MHz" split by a comma delimiter)
  if (/^\s*[-+]?[\d.,]/.test(text.slice(num[0].length)) && num[4] === "") return { unreadable: shown };
  const mantissa = groupedNumber(num[2], num[3] !== undefined);
  if (mantissa === undefined || mantissa === "ambiguous") return { unreadable: shown };
  const value = +`${num[1]}${mantissa}${num[3] ?? ""}`;
  if (!Number.isFinite(value)) return { unreadable: shown };
  return { value, unit: num[4] };
}

/** What a metadata line says about the sample rate: nothing, a rate, or a rate it could not read safely. */
export type MetadataRate = { rate: number } | { unreadable: string } | undefined;

export function readMetadataRate(line: string): MetadataRate {
  const text = line.trim().replace(LEAD, "");
  const interval = INTERVAL_KEY.exec(text);
  const rate = RATE_KEY.exec(text);
  const m = interval ?? rate;
  if (!m) return undefined;
  const isInterval = m === interval;
  const after = text.slice(m.index + m[0].length);
  // a unit may sit in the key: "Sample interval (us): 2"
  const keyUnit = /^\s*[([]\s*([^()[\]]+?)\s*[)\]]/.exec(after);
  const rest = (keyUnit ? after.slice(keyUnit[0].length) : after).replace(/^[\s:=,;\t]+/, "");
  const v = readValue(rest);
  if (!v || "unreadable" in v) return v;
  if (!(v.value > 0)) return { unreadable: quote(rest) };
  const unit = (v.unit || keyUnit?.[1] || "").toLowerCase();
  if (isInterval) {
    const scale = unit === "" ? 1 : TIME_UNITS[unit];
    if (scale === undefined) return undefined;
    return { rate: 1 / (v.value * scale) };
  }
  const scale = unit === "" ? 1 : RATE_UNITS[unit];
  if (scale === undefined) return undefined;
  return { rate: v.value * scale };
}

/**
 * The sample rate stated by a metadata line, if it states one that reads unambiguously
 * (`Sample interval: 1e-6`, `Sample rate,1 MHz`, `Sample rate: 1,000,000 Hz`). A number whose
 * grouping is ambiguous ("1,000 Hz", "1.000 Hz") gives undefined: the rate must then be stated.
 */
export function sampleRateFromMetadata(line: string): number | undefined {
  const r = readMetadataRate(line);
  return r && "rate" in r ? r.rate : undefined;
}

/** A metadata line split into its key and values: `Key: v`, `KEY=v`, `Key,v1,v2`, `#Key: v`. */
export function keyValue(fields: string[]): { key: string; values: string[] } | null {
  const first = (fields[0] ?? "").replace(LEAD, "");
  const sep = /\s*[:=]\s*/.exec(first);
  let key: string;
  let values: string[];
  if (sep && sep.index > 0) {
    key = first.slice(0, sep.index);
    values = [first.slice(sep.index + sep[0].length), ...fields.slice(1)];
  } else {
    key = first.replace(/\s*[:=]\s*$/, "");
    values = fields.slice(1);
  }
  key = key.replace(/["']/g, "").replace(/\s+/g, " ").trim();
  values = values.map((v) =>
    v
      .replace(/^[\s:=]+/, "")
      .replace(/^"|"$/g, "")
      .trim(),
  );
  while (values.length && values[0] === "") values.shift();
  while (values.length && values[values.length - 1] === "") values.pop();
  if (!key) return null;
  return { key, values };
}

const COLUMN_NAME_KEY = /^(source|channel|ch|trace|trace ?name|signal|name|label|tag|channel ?name)s?$/i;
const SOURCE_KEY = /^(source|channel|ch|trace|trace ?name|signal)$/i;
const UNIT_KEY = /^((vertical|y|v)\s*_?units?|vunit)$/i;
const UNIT_LIST_KEY = /^units?$/i;
const SCALE_KEY = /^(vertical\s*scale|volts?\s*\/\s*div(ision)?|v\/div|y\s*scale)$/i;
const ADC_KEY =
  /(per\s*(adc|code|count|lsb|bit)\b|\badc\s*(scale|step|lsb|value|resolution)\b|^lsb\b|^y\s*mult|^ymult|^y\s*increment|^yinc\b|^code\s*(scale|step)\b)/i;
const START_KEY =
  /^(start|x\s*start|xstart|start\s*time|x\s*origin|xorigin|x\s*zero|xzero|x0|t0|first\s*(point|sample)\s*time|horizontal\s*origin)$/i;
const NAME_KEY = /^(?:ch(?:annel)?\s*_?\s*(\d+)\s*_?\s*)?(name|label|tag)s?$/i;
const UNITS_KEY = /^(?:ch(?:annel)?\s*_?\s*(\d+)\s*_?\s*)(unit|units)$/i;

/** A value with an optional unit: "40.00mV" → { 40, "mV" }; "2.000E-01" → { 0.2, "" }. */
function quantity(text: string): { value: number; unit: string } | null {
  const m =
    /^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*([a-zA-Zµμ\uFFFD°%]*)\s*(?:\/\s*(?:div|code|count|lsb|adc))?\s*$/.exec(
      text,
    );
  if (!m) return null;
  const value = +m[1];
  return Number.isFinite(value) ? { value, unit: m[2] } : null;
}

/** What the metadata of one file says, gathered line by line. */
export class Metadata {
  rate: number | undefined;
  rateLine: number | null = null;
  /** the first metadata line stating a sample rate whose number could not be read unambiguously */
  unreadable: { line: number; text: string } | null = null;
  /** time of the first sample, s, when there is no time column */
  start: { value: number; line: number } | null = null;
  /** a channel named by a `Source` / `Channel` line */
  source: string | null = null;
  /** vertical units: one for all channels, or per channel name ("CH1:V") */
  unit: { all: string | null; byName: Map<string, string>; line: number } | null = null;
  /** the vertical scale per division, in `unit` */
  verticalScale: number | null = null;
  /** a stated scale per ADC code */
  adc: { value: number; unit: string | null; line: number } | null = null;
  /** channel names and units from `NAME=` / `CH2 NAME=` / `CH2 UNIT=` lines */
  names: string[] = [];
  units: string[] = [];
  namesByNumber = new Map<number, string>();
  /** names and units given one per column, by column index (0-based) */
  columnNames = new Map<number, string>();
  columnUnits = new Map<number, string>();
  unitsByNumber = new Map<number, string>();

  /** Notes one metadata line (its fields as split by the delimiter). */
  note(all: string[], line: number, delimiter: string): void {
    const fields = all.slice(0, effectiveCount(all));
    const nonBlank = fields.filter((f) => !BLANK.test(f));
    if (nonBlank.length === 0) return;
    // joined again with the delimiter, so that "1,000 Hz" split at a comma reads as it was written
    let r = readMetadataRate(fields.join(delimiter === " " ? " " : delimiter));
    // one value per channel (`HResolution,1e-6,1e-6`): read the first when the others repeat it
    if (r && "unreadable" in r && fields.length > 2 && fields.slice(2).every((f) => f.trim() === fields[1].trim())) {
      r = readMetadataRate(`${fields[0]}: ${fields[1]}`);
    }
    if (r && "rate" in r && this.rate === undefined) {
      this.rate = r.rate;
      this.rateLine = line;
    } else if (r && "unreadable" in r && this.unreadable === null) {
      this.unreadable = { line, text: r.unreadable };
    }
    // in a file of blank-separated columns a metadata line was split at its blanks: read it whole
    const kv = keyValue(delimiter === " " ? [nonBlank.join(" ")] : nonBlank);
    if (!kv) return;
    // a key in the first column and one value per column after it (`TraceName,CH1,CH2`, `VUnit,V,A`)
    const plainKey = !/[:=]/.test(fields[0] ?? "") && !BLANK.test(fields[0] ?? "");
    if (plainKey && delimiter !== " " && nonBlank.length > 2 && this.noteColumns(kv.key, fields)) return;
    this.noteKey(kv.key, kv.values, line);
  }

  /** Names or units given one per column; true when the key was one of those. */
  private noteColumns(key: string, fields: string[]): boolean {
    const target = COLUMN_NAME_KEY.test(key)
      ? this.columnNames
      : UNIT_KEY.test(key) || UNIT_LIST_KEY.test(key)
        ? this.columnUnits
        : null;
    if (!target || target.size > 0) return target !== null;
    for (let i = 1; i < fields.length; i++) {
      const v = fields[i].trim().replace(/^"|"$/g, "");
      if (v) target.set(i, v);
    }
    return true;
  }

  private noteKey(key: string, values: string[], line: number) {
    const v0 = values[0] ?? "";
    if (SOURCE_KEY.test(key) && values.length >= 1 && v0.length <= 24 && this.source === null && !/^\d/.test(v0)) {
      this.source = v0;
      return;
    }
    if (UNIT_KEY.test(key) && values.length >= 1 && this.unit === null) {
      const byName = new Map<string, string>();
      let all: string | null = null;
      for (const v of values) {
        const pair = /^(.+?)\s*:\s*(.+)$/.exec(v);
        if (pair) byName.set(pair[1].trim(), pair[2].trim());
        else if (all === null && v.length <= 8) all = v;
      }
      this.unit = { all, byName, line };
      return;
    }
    if (SCALE_KEY.test(key) && this.verticalScale === null) {
      const q = quantity(v0.replace(/^[A-Za-z]+\d*\s*:\s*/, ""));
      if (q && q.value > 0) this.verticalScale = q.value;
      return;
    }
    if (ADC_KEY.test(key) && this.adc === null) {
      const q = quantity(v0);
      if (q && q.value > 0) this.adc = { value: q.value, unit: normaliseUnit(q.unit), line };
      return;
    }
    if (START_KEY.test(key) && this.start === null) {
      const q = quantity(v0);
      const scale = q ? (q.unit === "" ? 1 : TIME_UNITS[q.unit.toLowerCase()]) : undefined;
      if (q && scale !== undefined) this.start = { value: q.value * scale, line };
      return;
    }
    const name = NAME_KEY.exec(key);
    if (name) {
      if (name[1]) this.namesByNumber.set(+name[1], v0);
      else this.names.push(...values);
      return;
    }
    if (UNIT_LIST_KEY.test(key)) {
      this.units.push(...values);
      return;
    }
    const unit = UNITS_KEY.exec(key);
    if (unit) this.unitsByNumber.set(+unit[1], v0);
  }
}
