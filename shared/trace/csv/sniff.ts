/**
 * The second stage of reading an export: rows are held until the layout can be decided — where the
 * data start, which columns hold them, which row names the columns and which gives their units,
 * which column is time (or numbers the samples), and what the lines above say.
 *
 * Every row gets a shape: the columns of its trailing run of numbers ([from, to)). Data rows share
 * one shape. The classic layout's rows are numbers from column 1 on; an export that writes key/value
 * metadata in the first columns beside the data (`Record Length,2500,,-3.3e-7,0.0056`, with an empty
 * column between) has data rows whose numbers start further right, and those rows are data too.
 * The data start at the first of CONFIRM_RUN rows of one shape (or, in a short file, at the last
 * group of rows of one shape).
 */
import { TraceParseError } from "../types";
import { clockSeconds, isClockField } from "./clock";
import {
  bareUnit,
  isAxisName,
  isIndexName,
  isIndexUnit,
  isSectionMarker,
  isTimeLikeName,
  isTimeUnit,
  looksLikeMetadata,
  looksLikeUnitsRow,
  parseColumnHeader,
  timeScaleOf,
  type ColumnHeader,
} from "./header";
import type { Metadata } from "./metadata";
import { BLANK, effectiveCount, fieldNumber, infiniteSign, isMissingField, isNumericField } from "./numbers";
import { columnLabel, quote } from "./words";

/** Rows needed in a row (same shape) before the data start is decided. */
export const CONFIRM_RUN = 16;
/** Rows buffered before the data start is decided anyway. */
const PREAMBLE_CAP = 5000;
/** Characters of rows buffered before the data start is decided anyway (long lines count too). */
const PREAMBLE_CHARS = 2 * 1024 * 1024;

export interface BufferedRow {
  line: number;
  row: string[];
  count: number;
  /** shape: from·65536 + to of the trailing run of numbers, or −1 when the row ends in text */
  shape: number;
}

/** How the data rows are read; decided once, from the rows above the data and the first data rows. */
export interface Layout {
  /** first and one-past-last column of the data */
  from: number;
  to: number;
  /** the time column, or −1 (sample rate from the settings or the metadata) */
  timeIdx: number;
  /** seconds per unit of the time column */
  timeScale: number;
  /** the time column states its unit (header or units row) */
  timeUnitStated: boolean;
  /** the time column holds date/time stamps */
  clock: boolean;
  valueIdx: number[];
  /** columns that number the samples (read and skipped) */
  indexIdx: number[];
  /** each value column's name and unit from the header, null when the header gives none */
  heads: (ColumnHeader | null)[];
  headerLine: number | null;
  firstDataLine: number;
  hasHeader: boolean;
}

export interface Decision {
  layout: Layout;
  /** the rows from the data start on, to be read as data */
  rest: BufferedRow[];
  /** rows of numbers just above the data start with another column count (skipped as ragged) */
  ragged: number[];
  /** metadata beside the data was read up to this line */
  notedThrough: number;
}

function dataLike(f: string): boolean {
  return isNumericField(f) || infiniteSign(f) !== 0 || isMissingField(f) || isClockField(f);
}

function shapeOf(row: string[], count: number): number {
  let s = count;
  while (s > 0 && dataLike(row[s - 1])) s--;
  return s < count ? s * 65536 + count : -1;
}

const shapeFrom = (shape: number) => Math.floor(shape / 65536);
const shapeTo = (shape: number) => shape % 65536;

function leftText(b: BufferedRow, from: number): boolean {
  for (let i = 0; i < from && i < b.row.length; i++) if (!BLANK.test(b.row[i])) return true;
  return false;
}

/**
 * A row of the data's shape with text right beside the numbers (`HOffset,0,0` above `,1.5,2.5`) is
 * a key and its values, not data; metadata beside the data stands apart from it (an empty column).
 */
function keyBeside(b: BufferedRow, from: number): boolean {
  return from > 0 && !BLANK.test(b.row[from - 1] ?? "");
}

/** All of the row is numbers (from column 1, or after empty columns): a data row, maybe ragged. */
/** A row that can start or continue the data: numbers at its end, and no key right beside them. */
function runRow(b: BufferedRow): boolean {
  return b.shape >= 0 && !keyBeside(b, shapeFrom(b.shape));
}

function allData(b: BufferedRow): boolean {
  return b.shape >= 0 && !leftText(b, shapeFrom(b.shape));
}

export interface SniffContext {
  delimiter: () => string;
  sampleRateHz: number | undefined;
  maxColumns: number;
  meta: Metadata;
  warnings: string[];
}

export class Preamble {
  private buffered: BufferedRow[] = [];
  private runCount = 0;
  private runShape = -1;
  private chars = 0;
  sawContent = false;

  constructor(private readonly ctx: SniffContext) {}

  /** Takes the next row; returns the decision once the data start is known. */
  add(row: string[], line: number): Decision | null {
    if (line === 1 && row.length > 0) row[0] = row[0].replace(/^\uFEFF/, "");
    const count = effectiveCount(row);
    if (count === 0) {
      this.buffered.push({ line, row, count, shape: -1 });
      return null;
    }
    this.sawContent = true;
    for (const f of row) this.chars += f.length + 1;
    const shape = shapeOf(row, count);
    const b = { line, row, count, shape };
    this.buffered.push(b);
    if (shape >= 0 && shape === this.runShape && !keyBeside(b, shapeFrom(shape))) this.runCount++;
    else if (shape >= 0 && !keyBeside(b, shapeFrom(shape))) {
      this.runShape = shape;
      this.runCount = 1;
    } else {
      this.runCount = 0;
      this.runShape = -1;
    }
    if (this.runCount >= CONFIRM_RUN) return this.decide(this.buffered.length - this.runCount);
    if (this.buffered.length >= PREAMBLE_CAP || this.chars >= PREAMBLE_CHARS) {
      if (this.buffered.some(runRow)) return this.decide(-1);
      // a very long preamble: keep its metadata and the last lines (header candidates)
      for (const x of this.buffered.slice(0, this.buffered.length - 32)) this.noteMetadata(x);
      this.buffered = this.buffered.slice(this.buffered.length - 32);
      this.chars = this.buffered.reduce((a, x) => a + x.row.reduce((b, f) => b + f.length + 1, 0), 0);
    }
    return null;
  }

  /** The end of the text before the data start was confirmed: decide on what there is. */
  end(): Decision {
    if (!this.sawContent) throw new TraceParseError("empty-file", "the file is empty", null);
    if (!this.buffered.some(runRow)) {
      throw new TraceParseError(
        "no-numeric-rows",
        "the file has no rows of numbers; export the capture's data points (not a screenshot or settings file)",
        null,
      );
    }
    return this.decide(-1);
  }

  private noteMetadata(b: BufferedRow) {
    if (b.count === 0 || allData(b)) return;
    this.ctx.meta.note(b.row.slice(0, b.count), b.line, this.ctx.delimiter());
  }

  /** `runStart`: index in `buffered` of a confirmed run of rows of one shape, or −1 for the last group. */
  private decide(runStart: number): Decision {
    const buf = this.buffered;
    if (runStart < 0) runStart = this.lastGroup();
    const shape = buf[runStart].shape;
    const from = shapeFrom(shape);
    const to = shapeTo(shape);

    // the block of rows that belong to the data: going back while rows are blank, of the data's
    // shape, all numbers (ragged data rows) or of the data's column count (text in a data row)
    let blockStart = runStart;
    for (let k = runStart - 1; k >= 0; k--) {
      const b = buf[k];
      const sameShape = b.shape === shape && !keyBeside(b, from);
      if (b.count === 0 || sameShape || allData(b) || b.count === to) blockStart = k;
      else break;
    }
    let dataStart = blockStart;
    while (!(buf[dataStart].shape === shape && !keyBeside(buf[dataStart], from))) dataStart++;

    const { header, unitsRow } = this.findHeader(dataStart, from, to);
    let extrasFrom: BufferedRow | null = unitsRow;
    if (header && header.count > to && !unitsRow) {
      // the first row under the names may be data that also carries the values of names beyond
      // the data's columns (`Time,CH1,Start,Increment` over `0,1.2,-1e-5,2e-9`)
      let k = buf.indexOf(header) + 1;
      while (k < dataStart && buf[k].count === 0) k++;
      const b = buf[k];
      if (k < dataStart && allData(b) && b.count <= header.count && b.count > to && shapeFrom(b.shape) === from) {
        extrasFrom = b;
        buf[k] = { line: b.line, row: b.row.slice(0, to), count: to, shape };
        dataStart = k;
      }
    }
    const ragged: number[] = [];
    for (let k = blockStart; k < dataStart; k++) if (allData(buf[k])) ragged.push(buf[k].line);
    for (let k = 0; k < dataStart; k++) {
      const b = buf[k];
      if (b !== header && b !== unitsRow && !allData(b)) this.noteMetadata(b);
    }
    if (header) this.headerExtras(header, extrasFrom ?? buf[dataStart], to);
    // key/value metadata beside the data rows read so far (the sample interval may be there)
    if (from > 0) {
      for (let k = dataStart; k < buf.length; k++) {
        const left = buf[k].row.slice(0, from);
        if (left.some((f) => !BLANK.test(f))) this.ctx.meta.note(left, buf[k].line, this.ctx.delimiter());
      }
    }

    const layout = this.columns(from, to, header, unitsRow, buf.slice(dataStart));
    const rest = buf.slice(dataStart);
    this.buffered = [];
    return { layout, rest, ragged, notedThrough: from > 0 ? buf[buf.length - 1].line : 0 };
  }

  /** First row of the last group of rows of one shape. */
  private lastGroup(): number {
    const buf = this.buffered;
    let k = buf.length - 1;
    while (k >= 0 && !runRow(buf[k])) k--;
    const shape = buf[k].shape;
    let start = k;
    for (let j = k - 1; j >= 0; j--) {
      if (buf[j].count === 0) continue;
      if (buf[j].shape !== shape || keyBeside(buf[j], shapeFrom(shape))) break;
      start = j;
    }
    return start;
  }

  /** The names row (and the units row under it) right above the data, if any. */
  private findHeader(
    dataStart: number,
    from: number,
    to: number,
  ): { header: BufferedRow | null; unitsRow: BufferedRow | null } {
    const buf = this.buffered;
    const shape = buf[dataStart].shape;
    const delimiter = this.ctx.delimiter();
    const usable = (b: BufferedRow) =>
      !allData(b) &&
      !(b.shape === shape && keyBeside(b, from)) &&
      !looksLikeMetadata(b.row, b.count, delimiter) &&
      !isSectionMarker(b.row, b.count);
    let h = dataStart - 1;
    while (h >= 0 && (buf[h].count === 0 || allData(buf[h]))) h--;
    if (h < 0 || !usable(buf[h])) return { header: null, unitsRow: null };
    const candidate = buf[h];
    let p = h - 1;
    while (p >= 0 && buf[p].count === 0) p--;
    if (
      p >= 0 &&
      looksLikeUnitsRow(candidate.row, from, to) &&
      usable(buf[p]) &&
      buf[p].count >= to &&
      !looksLikeUnitsRow(buf[p].row, from, to)
    ) {
      return { header: buf[p], unitsRow: candidate };
    }
    // a units row with no names row above it names no channel
    if (looksLikeUnitsRow(candidate.row, from, to)) return { header: null, unitsRow: candidate };
    return { header: candidate, unitsRow: null };
  }

  /** Names beyond the data's columns whose values stand in the row below (`Start,Increment`). */
  private headerExtras(header: BufferedRow, below: BufferedRow, to: number) {
    let unused = 0;
    for (let k = to; k < header.count; k++) {
      const name = header.row[k]?.trim() ?? "";
      const value = below.row[k]?.trim() ?? "";
      if (name && value) this.ctx.meta.note([`${name}: ${value}`], header.line, this.ctx.delimiter());
      else if (name) unused++;
    }
    if (unused > 0) {
      this.ctx.warnings.push(
        `line ${header.line}: the header names ${header.count} columns but the data have ${to}; extra names ignored`,
      );
    }
  }

  private columns(
    from: number,
    to: number,
    header: BufferedRow | null,
    unitsRow: BufferedRow | null,
    data: BufferedRow[],
  ): Layout {
    const heads: (ColumnHeader | null)[] = [];
    for (let i = 0; i < to; i++) {
      const rawName = header?.row[i]?.trim() ?? "";
      const rawUnit = unitsRow?.row[i] ?? "";
      if (i < from || (!rawName && !bareUnit(rawUnit))) {
        heads.push(null);
        continue;
      }
      const parsed = rawName ? parseColumnHeader(rawName) : { name: "", unit: null };
      const unit = bareUnit(rawUnit);
      if (unit) parsed.unit = unit;
      heads.push(parsed);
    }
    const sample = data.filter((b) => b.shape >= 0).slice(0, CONFIRM_RUN * 4);
    const roles = this.roles(from, to, heads, !!header, sample);
    const firstDataLine = data[0].line;
    const where = header?.line ?? firstDataLine;
    let timeScale = 1;
    if (roles.timeIdx >= 0 && !roles.clock) {
      const head = heads[roles.timeIdx];
      const scale = timeScaleOf(head?.unit ?? null);
      if (scale === undefined) {
        throw new TraceParseError(
          "unknown-time-unit",
          `the time column ${quote(header!.row[roles.timeIdx])} has the unit "${head!.unit}", which is not a time unit this reader knows (s, ms, us, µs, ns); re-export with time in seconds`,
          where,
        );
      }
      timeScale = scale;
    }
    // metadata beside the data may still state the rate further down: then the check waits for the end
    if (roles.timeIdx < 0 && from === 0 && this.ctx.sampleRateHz === undefined && this.ctx.meta.rate === undefined) {
      throw noSampleRate(this.ctx.meta, roles.skip.size > 0, where);
    }
    const valueIdx: number[] = [];
    for (let i = from; i < to; i++) if (i !== roles.timeIdx && !roles.skip.has(i)) valueIdx.push(i);
    if (valueIdx.length === 0) {
      throw new TraceParseError("no-value-columns", "the file has a time column but no value columns", where);
    }
    if (valueIdx.length > this.ctx.maxColumns) {
      throw new TraceParseError(
        "too-many-columns",
        `the file has ${valueIdx.length} value columns; at most ${this.ctx.maxColumns} are accepted — export fewer channels`,
        where,
      );
    }
    return {
      from,
      to,
      timeIdx: roles.timeIdx,
      timeScale,
      timeUnitStated: roles.timeIdx >= 0 && heads[roles.timeIdx]?.unit != null,
      clock: roles.clock,
      valueIdx,
      indexIdx: [...roles.skip],
      heads: valueIdx.map((i) => heads[i]),
      headerLine: header?.line ?? null,
      firstDataLine,
      hasHeader: !!header,
    };
  }

  /** Which column is time, which number the samples or hold dates beside the time. */
  private roles(from: number, to: number, heads: (ColumnHeader | null)[], hasHeader: boolean, sample: BufferedRow[]) {
    const rate = this.ctx.sampleRateHz ?? this.ctx.meta.rate;
    const skip = new Set<number>();
    const steps = (i: number) => columnSteps(sample, i);
    for (let i = from; i < to; i++) {
      const h = heads[i];
      if (!h) continue;
      const indexLike = isIndexUnit(h.unit) || (h.unit == null && isIndexName(h.name));
      const axisCounting = isAxisName(h.name) && h.unit == null && rate !== undefined && steps(i).counting;
      if (indexLike || axisCounting) {
        skip.add(i);
        this.ctx.warnings.push(
          `${columnLabel(i)} (${quote(h.name || h.unit || "")}) was read as a sample number, not a channel`,
        );
      }
    }
    const clockCols: number[] = [];
    for (let i = from; i < to; i++)
      if (!skip.has(i) && sample.length && sample.every((b) => isClockField(b.row[i] ?? ""))) clockCols.push(i);
    let timeIdx = -1;
    if (clockCols.length) timeIdx = clockCols[clockCols.length - 1];
    for (let i = from; i < to && timeIdx < 0; i++)
      if (!skip.has(i) && heads[i] && isTimeLikeName(heads[i]!.name)) timeIdx = i;
    for (let i = from; i < to && timeIdx < 0; i++)
      if (!skip.has(i) && heads[i] && isTimeUnit(heads[i]!.unit)) timeIdx = i;
    for (const c of clockCols) if (c !== timeIdx) skip.add(c);
    if (timeIdx < 0 && !hasHeader && to - from >= 2) {
      const s = steps(from);
      if (rate === undefined) {
        timeIdx = from;
        this.ctx.warnings.push(
          `line ${sample[0]?.line ?? 1}: the file has no header; ${columnLabel(from)} was taken as time in seconds`,
        );
      } else if (s.increasing && s.meanStep > 0 && Math.abs(s.meanStep * rate - 1) < 0.02) {
        timeIdx = from;
        this.ctx.warnings.push(
          `line ${sample[0]?.line ?? 1}: the file has no header; ${columnLabel(from)} rises by the sample interval and was taken as time in seconds`,
        );
      }
    }
    return { timeIdx, clock: clockCols.includes(timeIdx), skip };
  }
}

/** How a column's first values step: rising, rising by exactly 1 from a whole number (a count). */
function columnSteps(rows: BufferedRow[], col: number): { increasing: boolean; counting: boolean; meanStep: number } {
  const xs: number[] = [];
  for (const b of rows) {
    const f = b.row[col] ?? "";
    const v = isClockField(f) ? clockSeconds(f) : fieldNumber(f);
    if (v === undefined || !Number.isFinite(v)) return { increasing: false, counting: false, meanStep: 0 };
    xs.push(v);
  }
  if (xs.length < 2) return { increasing: false, counting: false, meanStep: 0 };
  let increasing = true;
  let counting = Number.isInteger(xs[0]);
  for (let i = 1; i < xs.length; i++) {
    if (!(xs[i] > xs[i - 1])) increasing = false;
    if (xs[i] - xs[i - 1] !== 1) counting = false;
  }
  return { increasing, counting: counting && increasing, meanStep: (xs[xs.length - 1] - xs[0]) / (xs.length - 1) };
}

/** The refusal of a file with no time column and no known sample rate, naming what it lacks. */
export function noSampleRate(meta: Metadata, hasIndex: boolean, line: number | null): TraceParseError {
  const unread = meta.unreadable
    ? ` (line ${meta.unreadable.line} states a sample rate, ${meta.unreadable.text}, but its number could be read more than one way, e.g. 1,000 as one thousand or as 1.000)`
    : "";
  const what = hasIndex
    ? "the file numbers its samples but has no time column, and no line states the sample interval or rate (such as Sample interval, Increment, Sampling period or Sample rate)"
    : "the file has no time column (none is named time, t or seconds, or has a time unit) and no line states the sample interval or rate";
  return new TraceParseError("no-sample-rate", `${what}${unread}; enter the sample rate in the capture settings`, line);
}
