/**
 * Parsing of scope and logger exports (CSV / TSV text) into typed arrays.
 *
 * Runs in the browser (instant preview) and on the server (the authority, streamed from disk).
 * Text is split into rows by papaparse's low-level parser in chunk mode (the same engine its
 * streamers use); rows go straight into growing typed arrays — never an array of JS numbers per row.
 * The work is done in stages (shared/trace/csv/): guard (line bound, binary bytes) → sniff (the
 * layout: where the data start, names, units, time) → accumulate (typed arrays) → finish (rate,
 * channels). docs/api.md ("CSV forms the importer reads") lists what is read.
 *
 * What is accepted:
 * - delimiter `,` `;`, tab or runs of blanks, detected from the data lines (or forced with `delimiter`);
 * - decimal comma (`0,0015;12,5`), detected per field;
 * - metadata / comment lines before the header (`Model,XYZ`, `# comment`, `;Sample rate,1e+06`,
 *   `Sample interval: 1e-6`, `Time interval :,0.08uS`, `SAMPLE_RATE=1000`, blank lines), and key/value
 *   metadata in columns beside the data (`Sample Interval,1.00E-09,,-3.3e-7,0.0056`). The data start
 *   at the first of a run of rows whose trailing numbers have the same columns; the header is the
 *   last line before it that is not metadata;
 * - an optional units row under the names row (`(s),(V)`, `second,Volt,Volt`, `Sequence,Volt`), and
 *   names beyond the data's columns whose values stand in the row below (`Start,Increment`);
 * - units in the names: `(V)`, `[kV]`, `C1 in V`, `in s`, `U / V`, `time_ms`; a metadata line's
 *   vertical unit (`Vertical Units,V`) when the header gives none. Units are normalised
 *   ("Volt" → "V"). Time is returned in seconds; a time column may hold date/time stamps;
 * - sample-number columns (`Sample`, `index`, `X` over `Sequence`) are skipped; the rate then comes
 *   from the settings or from a metadata line (interval or rate, with its unit);
 * - 1–8 value columns (values kept in the file's unit); whole numbers with a stated scale per ADC
 *   code are multiplied by it; an over-range sample written as infinity takes the channel's extreme;
 * - numbers in decimal notation with an optional exponent (no hexadecimal, binary or octal);
 *   values within ±3.4e38 (they are kept as single-precision floats);
 * - a file without any header: if no sample rate is stated and there are ≥ 2 columns, column 1 is
 *   taken as time in seconds (with a warning); with a known rate, column 1 is time only when it rises
 *   by the sample interval; otherwise all columns are values.
 *
 * Time that is evenly spaced (every sample within `uniformTolerance` of a sample interval of the
 * straight line through the first and last sample) gives `time = null`, `t0` and `sampleRateHz`;
 * otherwise `time` keeps every sample's time.
 *
 * Refusals are TraceParseError with a `code`, the 1-based `line` and a reason a tech can act on; see
 * TRACE_PARSE_ERROR_CODES. A line longer than MAX_LINE_CHARS or a binary byte anywhere is refused as
 * soon as it is seen; more than MAX_TRACE_SAMPLES samples are refused with code "too-large".
 */
import Papa from "papaparse";
import type { ParsedTrace } from "./types";
import { SampleStore, type RowCursor } from "./csv/accumulate";
import { detectDelimiter, detectNewline, SNIFF_CHARS, type TraceDelimiter } from "./csv/delimiter";
import { channelLabels, finishTrace } from "./csv/finish";
import { MAX_LINE_CHARS, TextGuard } from "./csv/guard";
import { Metadata } from "./csv/metadata";
import { Preamble, type Decision } from "./csv/sniff";

export { MAX_FLOAT32 } from "./csv/numbers";
export { parseColumnHeader } from "./csv/header";
export { sampleRateFromMetadata } from "./csv/metadata";
export { detectDelimiter, type TraceDelimiter } from "./csv/delimiter";
export { MAX_LINE_CHARS } from "./csv/guard";

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
  "line-too-long",
  "binary-content",
] as const;
export type TraceParseErrorCode = (typeof TRACE_PARSE_ERROR_CODES)[number];

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
  /** longest line accepted, in characters (default MAX_LINE_CHARS, 64 KiB) */
  maxLineChars?: number;
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

/** In a file of blank-separated columns, "Time (s)" splits in two: the bracketed unit joins its name. */
function joinUnits(row: string[]): string[] {
  const out: string[] = [];
  for (const f of row) {
    if (f === "") continue;
    if (out.length && /^[([][^()[\]]*[)\]]$/.test(f)) out[out.length - 1] += ` ${f}`;
    else out.push(f);
  }
  return out.length ? out : [""];
}

function checkOptions(opts: ParseTraceOptions) {
  const maxSamples = opts.maxSamples ?? MAX_TRACE_SAMPLES;
  if (!(Number.isInteger(maxSamples) && maxSamples >= 2)) throw new RangeError("maxSamples must be a whole number ≥ 2");
  if (opts.sampleRateHz !== undefined && !(opts.sampleRateHz > 0 && Number.isFinite(opts.sampleRateHz))) {
    throw new RangeError("sampleRateHz must be a positive number");
  }
  return maxSamples;
}

export function createTraceAccumulator(opts: ParseTraceOptions = {}): TraceAccumulator {
  const maxSamples = checkOptions(opts);
  const guard = new TextGuard(opts.maxLineChars ?? MAX_LINE_CHARS);
  const meta = new Metadata();
  const warnings: string[] = [];
  const cursor: RowCursor = { line: 0 };
  /** the delimiter the rows were split at (rows fed by pushRows: the stated one, else a comma) */
  let delimiter: TraceDelimiter = opts.delimiter ?? ",";
  const preamble = new Preamble({
    delimiter: () => delimiter,
    sampleRateHz: opts.sampleRateHz,
    maxColumns: opts.maxColumns ?? MAX_VALUE_COLUMNS,
    meta,
    warnings,
  });
  let store: SampleStore | null = null;
  let preRagged: number[] = [];

  // ---- text mode state
  let mode: "none" | "text" | "rows" = "none";
  let sniffBuffer = "";
  let parser: Papa.Parser | null = null;
  let carry = "";
  let firstText = true;
  let charsSeen = 0;
  let estimated = false;

  function start(d: Decision) {
    const s = new SampleStore(
      d.layout,
      maxSamples,
      meta,
      () => delimiter,
      () => channelLabels(d.layout, meta).map((l) => l.name),
    );
    store = s;
    s.notedThrough = d.notedThrough;
    preRagged = d.ragged;
    if (d.rest.length === 0) return;
    cursor.line = d.rest[0].line - 1;
    s.rows(
      d.rest.map((b) => b.row),
      0,
      cursor,
    );
  }

  function handleRows(rows: string[][]) {
    if (delimiter === " ") rows = rows.map((r) => joinUnits(r.flatMap((f) => f.split("\t"))));
    let i = 0;
    for (; i < rows.length && !store; i++) {
      cursor.line++;
      const d = preamble.add(rows[i], cursor.line);
      if (d) start(d);
    }
    if (store && i < rows.length) (store as SampleStore).rows(rows, i, cursor);
  }

  function feedParsed(text: string, last: boolean) {
    if (!parser) {
      const sample = sniffBuffer.slice(0, SNIFF_CHARS);
      delimiter = opts.delimiter ?? detectDelimiter(sample);
      parser = new Papa.Parser({ delimiter, newline: detectNewline(sample), quoteChar: '"' } as Papa.ParseConfig);
    }
    const input = carry + text;
    if (input === "") return;
    const res = parser.parse(input, 0, !last) as Papa.ParseResult<string[]>;
    carry = last ? "" : input.substring(res.meta.cursor);
    handleRows(res.data);
    if (!estimated && store) estimateCapacity(store);
  }

  /** Once the first chunk is through, size the arrays for the whole text (saves the doublings). */
  function estimateCapacity(s: SampleStore) {
    estimated = true;
    const consumed = charsSeen - carry.length;
    if (!opts.totalChars || consumed <= 0 || s.n === 0) return;
    s.reserve(Math.ceil(((s.n * opts.totalChars) / consumed) * 1.02) + 1024);
  }

  function pushText(chunk: string) {
    if (mode === "rows") throw new Error("pushText after pushRows");
    mode = "text";
    if (firstText && chunk.length > 0) {
      chunk = chunk.replace(/^\uFEFF/, "");
      firstText = false;
    }
    guard.scan(chunk);
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
    guard.rows(rows);
    handleRows(rows);
  }

  function finish(): ParsedTrace {
    if (mode === "text") {
      if (!parser) {
        if (sniffBuffer.length > 0) feedParsed(sniffBuffer, true);
        sniffBuffer = "";
      } else if (carry !== "") feedParsed("", true);
    }
    if (!store) start(preamble.end());
    const s = store as unknown as SampleStore;
    return finishTrace({
      store: s,
      layout: s.layout,
      meta,
      preRagged,
      statedRateHz: opts.sampleRateHz,
      tolerance: opts.uniformTolerance ?? 0.05,
      warnings,
    });
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
