/**
 * Parsing of scope exports (CSV / TSV text) into typed arrays.
 *
 * Runs in the browser (instant preview) and on the server (the authority, streamed from disk).
 * Text is split into rows by papaparse's low-level parser in chunk mode (the same engine its
 * streamers use); rows go straight into growing typed arrays — never an array of JS numbers per row.
 *
 * What is accepted:
 * - delimiter `,` `;` or tab, detected from the data lines (or forced with `delimiter`);
 * - decimal comma (`0,0015;12,5`), detected per field;
 * - metadata / comment lines before the header (`Model,XYZ`, `# comment`, `Sample interval: 1e-6`,
 *   blank lines). The data start at the first numeric row of the block of rows that have the data's
 *   column count; the header is the last non-numeric line before it;
 * - an optional units row under the names row (`(s),(V)`);
 * - time units in the header: `(s)` `(ms)` `(us)` `(µs)` `(ns)`, `[ms]`, or suffixes `_s` `_ms` `_us`
 *   `_ns`; seconds when none. Time is returned in seconds;
 * - 1–8 value columns (names and units from the header, values kept in the file's unit);
 * - no time column: the stated sample rate (`sampleRateHz`) or, failing that, a metadata line giving
 *   the sample interval or sample rate (digit grouping read as in `1,000,000`, `1.000.000` or
 *   `1 000 000`; an ambiguous number such as `1,000` is not used, so the rate must be stated);
 * - numbers in decimal notation with an optional exponent (no hexadecimal, binary or octal);
 *   values within ±3.4e38 (they are kept as single-precision floats);
 * - a file without any header: if no sample rate is stated and there are ≥ 2 columns, column 1 is
 *   taken as time in seconds (with a warning); otherwise all columns are values.
 *
 * Time that is evenly spaced (every sample within `uniformTolerance` of a sample interval of the
 * straight line through the first and last sample) gives `time = null`, `t0` and `sampleRateHz`;
 * otherwise `time` keeps every sample's time.
 *
 * Refusals are TraceParseError with a `code`, the 1-based `line` and a reason a tech can act on; see
 * TRACE_PARSE_ERROR_CODES. More than MAX_TRACE_SAMPLES samples are refused with code "too-large".
 */
import Papa from "papaparse";
import { TraceParseError, type ParsedTrace, type TraceChannel } from "./types";

/** Largest upload accepted for a trace file (the server wrapper refuses bigger files). 200 MiB. */
export const MAX_TRACE_FILE_BYTES = 200 * 1024 * 1024;
/** Most value columns a trace may have. */
export const MAX_VALUE_COLUMNS = 8;
/**
 * Most samples (data rows) a trace may have: 50 million, e.g. 50 s at 1 MS/s. Without it, 200 MiB
 * of "1\n" would be about 100 million samples of typed arrays in memory.
 */
export const MAX_TRACE_SAMPLES = 50_000_000;

export const TRACE_PARSE_ERROR_CODES = [
  "empty-file",
  "no-numeric-rows",
  "text-in-numeric-column",
  "time-not-increasing",
  "ragged-rows",
  "too-many-columns",
  "no-value-columns",
  "no-sample-rate",
  "unknown-time-unit",
  "too-few-samples",
  "too-large",
  "value-out-of-range",
] as const;
export type TraceParseErrorCode = (typeof TRACE_PARSE_ERROR_CODES)[number];

export type TraceDelimiter = "," | ";" | "\t";

export interface ParseTraceOptions {
  /** sample rate stated by the tech; used when the file has no time column */
  sampleRateHz?: number;
  /** most value columns accepted (default 8) */
  maxColumns?: number;
  /** most samples accepted (default MAX_TRACE_SAMPLES); more are refused with code "too-large" */
  maxSamples?: number;
  /** force the delimiter instead of detecting it */
  delimiter?: TraceDelimiter;
  /** largest deviation from an even time grid, as a fraction of a sample interval (default 0.05) */
  uniformTolerance?: number;
  /** expected total size of the text in characters (lets the arrays grow once instead of doubling) */
  totalChars?: number;
}

export interface TraceAccumulator {
  /** Feed the text in order, in chunks of any size (a chunk may end mid-line). */
  pushText(chunk: string): void;
  /**
   * Feed rows already split into fields, one row per line of the file (a blank line as `[""]`),
   * e.g. from papaparse's own `chunk` callback. Don't mix with pushText.
   */
  pushRows(rows: string[][]): void;
  /** Ends the input; returns the trace or throws TraceParseError. */
  finish(): ParsedTrace;
}

/** Rows needed in a row (numeric, same column count) before the data start is decided. */
const CONFIRM_RUN = 16;
/** Rows buffered before the data start is decided anyway. */
const PREAMBLE_CAP = 5000;
/** Characters of text looked at to detect the delimiter. */
const SNIFF_CHARS = 64 * 1024;
/** Lines named in a warning or error before "…". */
const LIST_LINES = 10;

// ---------------------------------------------------------------------------------------------
// numbers

const BLANK = /^\s*$/;
const DECIMAL_COMMA = /^\s*[-+]?(\d+,\d*|,\d+)([eE][-+]?\d+)?\s*$/;
/** A decimal number with an optional exponent (ECMA-262 StrDecimalLiteral without Infinity). */
const DECIMAL = /^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*$/;

/** Largest magnitude a value column holds: the largest finite float32, (2 − 2⁻²³)·2¹²⁷ (IEEE 754 binary32). */
export const MAX_FLOAT32 = 3.4028234663852886e38;

/**
 * A field as a number: NaN when it is not one, undefined when it is empty.
 *
 * `+s` is the fast path, but it also reads hexadecimal, binary and octal literals ("0x1A" → 26,
 * "0b101", "0o17"); those start with 0 and a letter (no sign, maybe after white space), so a field
 * starting with "0" and a letter, or with white space, is checked against the decimal pattern.
 */
function fieldNumber(s: string): number | undefined {
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

function isNumericField(s: string): boolean {
  const v = fieldNumber(s);
  return v !== undefined && v === v;
}

/** Column count without trailing empty fields (a trailing delimiter is common in exports). */
function effectiveCount(row: string[]): number {
  let n = row.length;
  while (n > 0 && BLANK.test(row[n - 1])) n--;
  return n;
}

function isNumericRow(row: string[], count: number): boolean {
  if (count === 0) return false;
  for (let i = 0; i < count; i++) if (!isNumericField(row[i])) return false;
  return true;
}

// ---------------------------------------------------------------------------------------------
// delimiter and line endings

/** Detects the delimiter from the numeric lines of a sample of the text. */
export function detectDelimiter(sample: string): TraceDelimiter {
  const lines = sample.split(/\r\n|\n|\r/);
  if (lines.length > 1 && sample.length >= SNIFF_CHARS) lines.pop(); // maybe cut mid-line
  const candidates: TraceDelimiter[] = ["\t", ";", ","];
  let best: TraceDelimiter | null = null;
  let bestScore = 0;
  for (const d of candidates) {
    let score = 0;
    for (const line of lines) {
      if (line.indexOf(d) < 0) continue;
      const fields = line.split(d);
      const n = effectiveCount(fields);
      if (n >= 2 && isNumericRow(fields, n)) score++;
    }
    if (score > bestScore) {
      best = d;
      bestScore = score;
    }
  }
  if (best) return best;
  // one column of numbers (or none at all): take the delimiter the text lines use, if any
  for (const d of candidates) if (lines.some((l) => l.includes(d) && !BLANK.test(l))) return d;
  return ",";
}

function detectNewline(sample: string): "\r\n" | "\n" | "\r" {
  const i = sample.search(/\r\n|\n|\r/);
  if (i < 0) return "\n";
  if (sample[i] === "\n") return "\n";
  return sample[i + 1] === "\n" ? "\r\n" : "\r";
}

// ---------------------------------------------------------------------------------------------
// header

interface ColumnHeader {
  name: string;
  unit: string | null;
}

const TIME_UNITS: Record<string, number> = {
  s: 1,
  sec: 1,
  secs: 1,
  second: 1,
  seconds: 1,
  ms: 1e-3,
  msec: 1e-3,
  us: 1e-6,
  "µs": 1e-6,
  "μs": 1e-6,
  "\uFFFDs": 1e-6, // µ from a Latin-1 file read as UTF-8
  usec: 1e-6,
  ns: 1e-9,
  nsec: 1e-9,
  ps: 1e-12,
  min: 60,
};

const KNOWN_UNITS = new Set([
  ...Object.keys(TIME_UNITS),
  "v",
  "mv",
  "kv",
  "uv",
  "µv",
  "a",
  "ma",
  "ka",
  "hz",
  "khz",
  "%",
  "deg",
  "°",
  "°c",
  "bar",
  "kpa",
  "psi",
  "ohm",
]);

function timeScaleOf(unit: string | null): number | undefined {
  if (unit == null) return 1;
  return TIME_UNITS[unit.trim().toLowerCase()] ?? TIME_UNITS[unit.trim()];
}

function isTimeUnit(unit: string | null): boolean {
  return unit != null && TIME_UNITS[unit.trim().toLowerCase()] !== undefined && unit.trim().toLowerCase() !== "min";
}

/** `Channel A (V)` → { name: "Channel A", unit: "V" }; `A [kV]`; `time_ms` → { "time", "ms" }. */
export function parseColumnHeader(raw: string): ColumnHeader {
  const text = raw.replace(/^\uFEFF/, "").trim();
  const bracket = /^(.*?)\s*[([]\s*([^()[\]]*?)\s*[)\]]\s*$/.exec(text);
  if (bracket) return { name: bracket[1].trim() || text, unit: bracket[2] || null };
  const slash = /^(.+?)\s*\/\s*([a-zA-Zµμ]{1,4})$/.exec(text);
  if (slash && isTimeLikeName(slash[1]) && isTimeUnit(slash[2])) return { name: slash[1].trim(), unit: slash[2] };
  const suffix = /^(.+?)_(s|ms|us|µs|μs|ns)$/i.exec(text);
  if (suffix && isTimeLikeName(suffix[1])) return { name: suffix[1], unit: suffix[2] };
  return { name: text, unit: null };
}

function isTimeLikeName(name: string): boolean {
  const n = name.trim().toLowerCase();
  if (n === "t" || /^time|\btime$/.test(n)) return true;
  return ["seconds", "second", "secs", "sec", "timestamp", "elapsed", "zeit", "tiempo", "temps", "tempo"].includes(n);
}

/** Column names that number the samples rather than measure anything. */
const SAMPLE_NUMBER_NAMES = new Set(["sample", "samples", "sample no", "sample no.", "sample #", "index", "idx", "no", "no.", "n", "#", "point", "pt"]);

function looksLikeUnitsRow(row: string[], count: number): boolean {
  let units = 0;
  for (let i = 0; i < count; i++) {
    const f = row[i].trim();
    if (f === "") continue;
    if (!/^[([]\s*[^()[\]]*\s*[)\]]$/.test(f) && !KNOWN_UNITS.has(f.toLowerCase())) return false;
    units++;
  }
  return units > 0;
}

/** A line that reads as metadata (`key: 12`, `key=12`, `key,12`, a comment), not as column names. */
function looksLikeMetadata(row: string[], count: number): boolean {
  const first = row[0]?.trim() ?? "";
  if (/^(#|\/\/|%|;|!)/.test(first)) return true;
  const joined = row.slice(0, count).join(" ");
  if (/[:=]\s*[-+]?[\d.,]/.test(joined)) return true;
  if (count === 2 && !isNumericField(row[0]) && isNumericField(row[1])) return true;
  return false;
}

// ---------------------------------------------------------------------------------------------
// metadata: sample interval / rate

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
};

/**
 * The number at the start of a metadata value: digits with `.` `,` and (only between digits)
 * spaces, then an optional exponent; the unit follows.
 */
const METADATA_NUMBER = /^([-+]?)((?:\d|[.,](?=\d))(?:[\d.,]|[ \u00a0\u2009\u202f](?=\d))*)([eE][-+]?\d+)?\s*([a-zA-Zµμ\uFFFD/]*)/;

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

/** What a metadata line says about the sample rate: nothing, a rate, or a rate it could not read safely. */
type MetadataRate = { rate: number } | { unreadable: string } | undefined;

function readMetadataRate(line: string): MetadataRate {
  const text = line.trim();
  const interval = /(sampl\w*\s*(interval|period|increment|step|time)|x\s*increment|\bxinc\b|^dt\b|^delta\s*t\b|^interval\b)/i.exec(text);
  const rate = /(sampl\w*\s*(rate|frequency|freq)|^fs\b)/i.exec(text);
  const m = interval ?? rate;
  if (!m) return undefined;
  const after = text.slice(m.index + m[0].length);
  // a unit may sit in the key: "Sample interval (us): 2"
  const keyUnit = /^\s*[([]\s*([^()[\]]+?)\s*[)\]]/.exec(after);
  const rest = (keyUnit ? after.slice(keyUnit[0].length) : after).replace(/^[\s:=,;\t]+/, "");
  const num = METADATA_NUMBER.exec(rest);
  if (!num) return undefined;
  const shown = quote(rest);
  // more digits after the number and its unit ("1 5 MHz", "1,5 MHz" split by a comma delimiter)
  if (/^\s*[-+]?[\d.,]/.test(rest.slice(num[0].length)) && num[4] === "") return { unreadable: shown };
  const mantissa = groupedNumber(num[2], num[3] !== undefined);
  if (mantissa === undefined || mantissa === "ambiguous") return { unreadable: shown };
  const value = +`${num[1]}${mantissa}${num[3] ?? ""}`;
  if (!(value > 0) || !Number.isFinite(value)) return { unreadable: shown };
  const unit = (num[4] || keyUnit?.[1] || "").toLowerCase();
  if (interval) {
    const scale = unit === "" ? 1 : TIME_UNITS[unit];
    if (scale === undefined) return undefined;
    return { rate: 1 / (value * scale) };
  }
  const scale = unit === "" ? 1 : RATE_UNITS[unit];
  if (scale === undefined) return undefined;
  return { rate: value * scale };
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

// ---------------------------------------------------------------------------------------------
// the accumulator

interface BufferedRow {
  line: number;
  row: string[];
  count: number;
  numeric: boolean;
}

function columnLabel(i: number): string {
  return `column ${i + 1}`;
}

function listLines(lines: number[], total: number): string {
  const shown = lines.slice(0, LIST_LINES).join(", ");
  return total > lines.length || total > LIST_LINES ? `${shown}, …` : shown;
}

function quote(s: string): string {
  const t = s.trim();
  return JSON.stringify(t.length > 40 ? `${t.slice(0, 40)}…` : t);
}

/** Rounds a rate derived from printed times to 12 significant digits (1e6 rather than 999999.9999999999). */
function tidyRate(rate: number): number {
  return Number(rate.toPrecision(12));
}

export function createTraceAccumulator(opts: ParseTraceOptions = {}): TraceAccumulator {
  const maxColumns = opts.maxColumns ?? MAX_VALUE_COLUMNS;
  const maxSamples = opts.maxSamples ?? MAX_TRACE_SAMPLES;
  if (!(Number.isInteger(maxSamples) && maxSamples >= 2)) throw new RangeError("maxSamples must be a whole number ≥ 2");
  const tolerance = opts.uniformTolerance ?? 0.05;
  if (opts.sampleRateHz !== undefined && !(opts.sampleRateHz > 0 && Number.isFinite(opts.sampleRateHz))) {
    throw new RangeError("sampleRateHz must be a positive number");
  }

  // ---- text mode state
  let mode: "none" | "text" | "rows" = "none";
  let sniffBuffer = "";
  let parser: Papa.Parser | null = null;
  /** the delimiter the rows were split at (rows fed by pushRows: the stated one, else a comma) */
  let delimiter: TraceDelimiter = opts.delimiter ?? ",";
  let carry = "";
  let firstText = true;
  let charsSeen = 0;
  let estimated = false;

  // ---- row state
  let line = 0; // 1-based number of the last row seen
  let sawContent = false;
  let state: "preamble" | "data" = "preamble";
  let buffered: BufferedRow[] = [];
  let runCount = 0; // consecutive numeric rows with the same count at the end of `buffered`
  let runWidth = -1;
  let metadataRate: number | undefined;
  let metadataRateLine: number | null = null;
  /** the first metadata line stating a sample rate whose number could not be read unambiguously */
  let unreadableRate: { line: number; text: string } | null = null;

  // ---- data state
  let ncol = 0;
  let timeIdx = -1;
  let timeScale = 1;
  let valueIdx: number[] = [];
  let channelInfo: ColumnHeader[] = [];
  let headerLine: number | null = null;
  let cap = 0;
  let n = 0;
  let time: Float64Array | null = null;
  let values: Float32Array[] = [];
  let lastTime = -Infinity;
  let raggedCount = 0;
  const raggedLines: number[] = [];
  let firstRaggedDetail = "";
  const warnings: string[] = [];

  function feedParsed(text: string, last: boolean) {
    if (!parser) {
      const sample = sniffBuffer.slice(0, SNIFF_CHARS);
      delimiter = opts.delimiter ?? detectDelimiter(sample);
      parser = new Papa.Parser({
        delimiter,
        newline: detectNewline(sample),
        quoteChar: '"',
      } as Papa.ParseConfig);
    }
    const input = carry + text;
    if (input === "") return;
    const res = parser.parse(input, 0, !last) as Papa.ParseResult<string[]>;
    carry = last ? "" : input.substring(res.meta.cursor);
    handleRows(res.data);
    if (!estimated && state === "data") estimateCapacity();
  }

  function pushText(chunk: string) {
    if (mode === "rows") throw new Error("pushText after pushRows");
    mode = "text";
    if (firstText && chunk.length > 0) {
      chunk = chunk.replace(/^\uFEFF/, "");
      firstText = false;
    }
    charsSeen += chunk.length;
    if (!parser) {
      sniffBuffer += chunk;
      if (sniffBuffer.length < SNIFF_CHARS) return;
      const text = sniffBuffer;
      feedParsed(text, false);
      sniffBuffer = "";
      return;
    }
    feedParsed(chunk, false);
  }

  function pushRows(rows: string[][]) {
    if (mode === "text") throw new Error("pushRows after pushText");
    mode = "rows";
    handleRows(rows);
  }

  function handleRows(rows: string[][]) {
    let i = 0;
    if (state === "preamble") {
      for (; i < rows.length && state === "preamble"; i++) preambleRow(rows[i]);
    }
    if (i < rows.length) dataRows(rows, i);
  }

  // ---- preamble: buffer rows until the data start can be decided

  function preambleRow(row: string[]) {
    line++;
    if (line === 1 && row.length > 0) row[0] = row[0].replace(/^\uFEFF/, "");
    const count = effectiveCount(row);
    if (count === 0) {
      buffered.push({ line, row, count, numeric: false });
      return;
    }
    sawContent = true;
    const numeric = isNumericRow(row, count);
    buffered.push({ line, row, count, numeric });
    if (numeric) {
      if (count === runWidth) runCount++;
      else {
        runWidth = count;
        runCount = 1;
      }
    } else {
      runCount = 0;
      runWidth = -1;
    }
    if (runCount >= CONFIRM_RUN) decide(buffered.length - runCount);
    else if (buffered.length >= PREAMBLE_CAP) {
      if (buffered.some((b) => b.numeric)) decide(-1);
      else {
        // a very long preamble: keep its metadata and the last lines (header candidates)
        for (const b of buffered.slice(0, buffered.length - 32)) noteMetadata(b);
        buffered = buffered.slice(buffered.length - 32);
      }
    }
  }

  function noteMetadata(b: BufferedRow) {
    if (b.count === 0 || b.numeric) return;
    // joined again with the delimiter, so that "1,000 Hz" split at a comma reads as it was written
    const r = readMetadataRate(b.row.slice(0, b.count).join(delimiter));
    if (r && "rate" in r && metadataRate === undefined) {
      metadataRate = r.rate;
      metadataRateLine = b.line;
    } else if (r && "unreadable" in r && unreadableRate === null) {
      unreadableRate = { line: b.line, text: r.unreadable };
    }
  }

  /**
   * Decides where the data start. `runStart` is the index in `buffered` of a confirmed run of
   * numeric rows, or -1 to take the last numeric row seen.
   */
  function decide(runStart: number) {
    if (runStart < 0) {
      // runStart: first numeric row of the last group of numeric rows
      let k = buffered.length - 1;
      while (k >= 0 && !buffered[k].numeric) k--;
      while (k > 0 && (buffered[k - 1].numeric || buffered[k - 1].count === 0)) k--;
      while (k < buffered.length && !buffered[k].numeric) k++;
      runStart = k;
    }
    const width = buffered[runStart].count;
    // the block of rows that belong to the data: going back while rows are blank, numeric (any
    // count: ragged data rows) or have the data's column count
    let blockStart = runStart;
    for (let k = runStart - 1; k >= 0; k--) {
      const b = buffered[k];
      if (b.count === 0 || b.numeric || b.count === width) blockStart = k;
      else break;
    }
    // the data start at the block's first numeric row with the data's count
    let dataStart = blockStart;
    while (!(buffered[dataStart].numeric && buffered[dataStart].count === width)) dataStart++;

    // header: the last non-blank row before the data start, unless it reads as metadata
    let header: BufferedRow | null = null;
    let unitsRow: BufferedRow | null = null;
    let h = dataStart - 1;
    while (h >= 0 && buffered[h].count === 0) h--;
    if (h >= 0 && !buffered[h].numeric && !looksLikeMetadata(buffered[h].row, buffered[h].count)) {
      header = buffered[h];
      // a units row under the names row
      let p = h - 1;
      while (p >= 0 && buffered[p].count === 0) p--;
      if (
        p >= 0 &&
        looksLikeUnitsRow(header.row, header.count) &&
        !buffered[p].numeric &&
        buffered[p].count === header.count &&
        !looksLikeMetadata(buffered[p].row, buffered[p].count)
      ) {
        unitsRow = header;
        header = buffered[p];
      }
    }
    for (let k = 0; k < dataStart; k++) {
      if (buffered[k] !== header && buffered[k] !== unitsRow) noteMetadata(buffered[k]);
    }

    setupColumns(width, header, unitsRow, buffered[dataStart].line);

    const rest = buffered.slice(dataStart);
    buffered = [];
    state = "data";
    const restLine = rest[0].line;
    line = restLine - 1;
    dataRows(
      rest.map((b) => b.row),
      0,
    );
  }

  function setupColumns(width: number, header: BufferedRow | null, unitsRow: BufferedRow | null, firstDataLine: number) {
    ncol = width;
    headerLine = header?.line ?? null;
    const heads: (ColumnHeader | null)[] = [];
    for (let i = 0; i < width; i++) {
      const rawName = header?.row[i]?.trim() ?? "";
      if (!header || rawName === "") {
        heads.push(null);
        continue;
      }
      const parsed = parseColumnHeader(rawName);
      if (unitsRow) {
        const u = unitsRow.row[i]?.trim() ?? "";
        const m = /^[([]\s*([^()[\]]*)\s*[)\]]$/.exec(u);
        const unit = m ? m[1].trim() : u;
        if (unit) parsed.unit = unit;
      }
      heads.push(parsed);
    }
    if (header && header.count > width) {
      warnings.push(`line ${header.line}: the header names ${header.count} columns but the data have ${width}; extra names ignored`);
    }

    const stated = opts.sampleRateHz;
    timeIdx = -1;
    if (header) {
      timeIdx = heads.findIndex((c) => c != null && isTimeLikeName(c.name));
      if (timeIdx < 0) timeIdx = heads.findIndex((c) => c != null && isTimeUnit(c.unit));
    } else if (width >= 2 && stated === undefined && metadataRate === undefined) {
      timeIdx = 0;
      warnings.push(`line ${firstDataLine}: the file has no header; column 1 was taken as time in seconds`);
    }
    const where = headerLine ?? firstDataLine;
    if (timeIdx >= 0) {
      const head = heads[timeIdx];
      const scale = timeScaleOf(head?.unit ?? null);
      if (scale === undefined) {
        throw new TraceParseError(
          "unknown-time-unit",
          `the time column ${quote(header!.row[timeIdx])} has the unit "${head!.unit}", which is not a time unit this reader knows (s, ms, us, µs, ns); re-export with time in seconds`,
          where,
        );
      }
      timeScale = scale;
    } else if (stated === undefined && metadataRate === undefined) {
      const unread = unreadableRate
        ? ` (line ${unreadableRate.line} states a sample rate, ${unreadableRate.text}, but its number could be read more than one way, e.g. 1,000 as one thousand or as 1.000)`
        : "";
      throw new TraceParseError(
        "no-sample-rate",
        `the file has no time column (none is named time, t or seconds) and no sample rate was given${unread}; enter the sample rate in the capture settings`,
        where,
      );
    }
    valueIdx = [];
    for (let i = 0; i < width; i++) {
      if (i === timeIdx) continue;
      const head = heads[i];
      if (head && head.unit == null && SAMPLE_NUMBER_NAMES.has(head.name.toLowerCase())) {
        warnings.push(`${columnLabel(i)} (${quote(head.name)}) was read as a sample number, not a channel`);
        continue;
      }
      valueIdx.push(i);
    }
    if (valueIdx.length === 0) {
      throw new TraceParseError("no-value-columns", "the file has a time column but no value columns", where);
    }
    if (valueIdx.length > maxColumns) {
      throw new TraceParseError(
        "too-many-columns",
        `the file has ${valueIdx.length} value columns; at most ${maxColumns} are accepted — export fewer channels`,
        where,
      );
    }
    const used = new Set<string>();
    channelInfo = valueIdx.map((col, k) => {
      const head = heads[col];
      let name = head?.name || (header ? `Column ${col + 1}` : String.fromCharCode(65 + k));
      const base = name;
      for (let d = 2; used.has(name); d++) name = `${base} (${d})`;
      used.add(name);
      return { name, unit: head?.unit ?? null };
    });

    cap = Math.min(4096, maxSamples);
    time = timeIdx >= 0 ? new Float64Array(cap) : null;
    values = valueIdx.map(() => new Float32Array(cap));
  }

  function grow(rowLine: number) {
    if (cap >= maxSamples) {
      throw new TraceParseError(
        "too-large",
        `the file has more than ${maxSamples.toLocaleString("en-US")} samples, the most a trace may have; export a shorter stretch of the capture or a lower sample rate`,
        rowLine,
      );
    }
    resize(Math.min(cap * 2, maxSamples));
  }

  /** Once the first chunk is through, size the arrays for the whole text (saves the doublings). */
  function estimateCapacity() {
    estimated = true;
    const consumed = charsSeen - carry.length;
    if (!opts.totalChars || consumed <= 0 || n === 0) return;
    const est = Math.min(maxSamples, Math.ceil(((n * opts.totalChars) / consumed) * 1.02) + 1024);
    if (est > cap) resize(est);
  }

  function resize(next: number) {
    if (time) {
      const t = new Float64Array(next);
      t.set(time.subarray(0, n));
      time = t;
    }
    values = values.map((v) => {
      const w = new Float32Array(next);
      w.set(v.subarray(0, n));
      return w;
    });
    cap = next;
  }

  function ragged(rowLine: number, detail: string) {
    raggedCount++;
    if (raggedLines.length < LIST_LINES) raggedLines.push(rowLine);
    if (!firstRaggedDetail) firstRaggedDetail = detail;
  }

  function fieldLabel(col: number): string {
    return col === timeIdx ? `the time column (${columnLabel(col)})` : `${columnLabel(col)} (${quote(channelInfo[valueIdx.indexOf(col)].name)})`;
  }

  function textError(rowLine: number, col: number, s: string): never {
    const nonDecimal = /^\s*0[xXbBoO]/.test(s) ? " in decimal notation (hexadecimal, binary and octal values are not read)" : "";
    throw new TraceParseError("text-in-numeric-column", `${fieldLabel(col)} has ${quote(s)}, which is not a number${nonDecimal}`, rowLine);
  }

  function rangeError(rowLine: number, col: number, s: string): never {
    const limit = col === timeIdx ? "a time this reader can hold" : `the largest value a channel holds (±3.4e38, single precision)`;
    throw new TraceParseError(
      "value-out-of-range",
      `${fieldLabel(col)} has ${quote(s)}, which is beyond ${limit}; check the export's units or number format`,
      rowLine,
    );
  }

  function dataRows(rows: string[][], from: number) {
    const nv = valueIdx.length;
    const vIdx = valueIdx;
    const tIdx = timeIdx;
    const width = ncol;
    for (let r = from; r < rows.length; r++) {
      const row = rows[r];
      const rowLine = ++line;
      if (row.length === 1 && BLANK.test(row[0])) continue; // blank line
      if (row.length !== width) {
        const count = effectiveCount(row);
        if (count === 0) continue; // blank line
        if (count !== width) {
          ragged(rowLine, `has ${count} column${count === 1 ? "" : "s"}`);
          continue;
        }
      }
      if (n === cap) grow(rowLine);
      let tv = 0;
      if (tIdx >= 0) {
        const s = row[tIdx];
        const v = fieldNumber(s);
        if (v === undefined) {
          ragged(rowLine, "has an empty time field");
          continue;
        }
        if (v !== v) textError(rowLine, tIdx, s);
        tv = v * timeScale;
        if (!(tv - tv === 0)) rangeError(rowLine, tIdx, s);
        if (!(tv > lastTime)) {
          throw new TraceParseError(
            "time-not-increasing",
            `time goes from ${lastTime} s to ${tv} s; each time must be greater than the one before (check the export's time precision or sort the file)`,
            rowLine,
          );
        }
      }
      let complete = true;
      for (let j = 0; j < nv; j++) {
        const col = vIdx[j];
        const s = row[col];
        const v = fieldNumber(s);
        if (v === undefined) {
          complete = false;
          break;
        }
        if (v !== v) textError(rowLine, col, s);
        if (v > MAX_FLOAT32 || v < -MAX_FLOAT32) rangeError(rowLine, col, s);
        values[j][n] = v;
      }
      if (!complete) {
        ragged(rowLine, "has an empty value");
        continue;
      }
      if (time) {
        time[n] = tv;
        lastTime = tv;
      }
      n++;
    }
  }

  function finish(): ParsedTrace {
    if (mode === "text") {
      if (!parser) {
        if (sniffBuffer.length > 0) feedParsed(sniffBuffer, true);
        sniffBuffer = "";
      } else if (carry !== "") feedParsed("", true);
    }
    if (state === "preamble") {
      if (!sawContent) throw new TraceParseError("empty-file", "the file is empty", null);
      if (!buffered.some((b) => b.numeric)) {
        throw new TraceParseError(
          "no-numeric-rows",
          "the file has no rows of numbers; export the capture's data points (not a screenshot or settings file)",
          null,
        );
      }
      decide(-1);
    }

    const rows = n;
    const allowed = Math.max(10, Math.floor(0.001 * (rows + raggedCount)));
    if (raggedCount > allowed) {
      throw new TraceParseError(
        "ragged-rows",
        `${raggedCount} rows have missing or extra columns (expected ${ncol}; line ${raggedLines[0]} ${firstRaggedDetail}); lines ${listLines(raggedLines, raggedCount)} — the file may be cut short or mixed`,
        raggedLines[0],
      );
    }
    if (raggedCount > 0) {
      warnings.push(
        `skipped ${raggedCount} row${raggedCount === 1 ? "" : "s"} with missing or extra columns: line${raggedCount === 1 ? "" : "s"} ${listLines(raggedLines, raggedCount)}`,
      );
    }
    if (rows < 2) {
      throw new TraceParseError("too-few-samples", `the file has ${rows} data row${rows === 1 ? "" : "s"}; a trace needs at least 2`, headerLine);
    }

    let t0 = 0;
    let sampleRateHz: number;
    let timeOut: Float64Array | null = null;
    if (time) {
      const t = time;
      t0 = t[0];
      const span = t[rows - 1] - t0;
      const dt = span / (rows - 1);
      let maxDev = 0;
      for (let i = 1; i < rows - 1; i++) {
        const dev = Math.abs(t[i] - (t0 + i * dt));
        if (dev > maxDev) maxDev = dev;
      }
      if (maxDev <= tolerance * dt) {
        sampleRateHz = tidyRate(1 / dt);
      } else {
        sampleRateHz = (rows - 1) / span;
        timeOut = cap > rows * 1.125 ? t.slice(0, rows) : t.subarray(0, rows);
        warnings.push(`the time column is not evenly spaced (mean sample rate ${tidyRate(sampleRateHz)} Hz); every sample's time is kept`);
      }
      if (opts.sampleRateHz !== undefined && Math.abs(opts.sampleRateHz - sampleRateHz) > 0.01 * sampleRateHz) {
        warnings.push(
          `the stated sample rate (${opts.sampleRateHz} Hz) differs from the file's time column (${tidyRate(sampleRateHz)} Hz); the time column was used`,
        );
      }
    } else if (opts.sampleRateHz !== undefined) {
      sampleRateHz = opts.sampleRateHz;
      if (metadataRate !== undefined && Math.abs(metadataRate - sampleRateHz) > 0.01 * sampleRateHz) {
        warnings.push(
          `line ${metadataRateLine}: the file states a sample rate of ${tidyRate(metadataRate)} Hz but ${sampleRateHz} Hz was given; the given rate was used`,
        );
      }
    } else {
      sampleRateHz = tidyRate(metadataRate!);
      warnings.push(`line ${metadataRateLine}: no time column; the sample rate ${sampleRateHz} Hz was taken from this line`);
    }

    const channels: TraceChannel[] = channelInfo.map((c, j) => {
      const all = values[j];
      const v = cap > rows * 1.125 ? all.slice(0, rows) : all.subarray(0, rows);
      let min = Infinity;
      let max = -Infinity;
      for (let i = 0; i < rows; i++) {
        const x = v[i];
        if (x < min) min = x;
        if (x > max) max = x;
      }
      return { name: c.name, unit: c.unit, values: v, min, max };
    });
    return {
      samples: rows,
      sampleRateHz,
      t0,
      durationS: rows / sampleRateHz,
      time: timeOut,
      channels,
      warnings,
    };
  }

  return { pushText, pushRows, finish };
}

/** Characters fed to the accumulator at a time by parseTraceText. */
const TEXT_SLICE = 1 << 20;

/**
 * Parses a whole CSV/TSV text (previews, the CLI, tests). Same rules and results as the streamed
 * server parse. Throws TraceParseError.
 */
export function parseTraceText(text: string, opts: ParseTraceOptions = {}): ParsedTrace {
  const acc = createTraceAccumulator({ ...opts, totalChars: opts.totalChars ?? text.length });
  for (let i = 0; i < text.length; i += TEXT_SLICE) acc.pushText(text.slice(i, i + TEXT_SLICE));
  return acc.finish();
}
