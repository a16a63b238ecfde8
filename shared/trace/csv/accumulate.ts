/**
 * The third stage of reading an export: data rows go straight into growing typed arrays (Float64
 * time, Float32 per channel) — never an array of JS numbers per row. Rows with missing or extra
 * columns are skipped and counted; text in a numeric column, time that does not increase, values
 * beyond single precision and more samples than allowed are refused with the line.
 */
import { TraceParseError } from "../types";
import { clockSeconds } from "./clock";
import type { Metadata } from "./metadata";
import { BLANK, effectiveCount, fieldNumber, infiniteSign, isMissingField, MAX_FLOAT32 } from "./numbers";
import type { Layout } from "./sniff";
import { columnLabel, LIST_LINES, plural, quote } from "./words";

export interface RowCursor {
  /** 1-based number of the last row seen */
  line: number;
}

export class SampleStore {
  cap = 0;
  n = 0;
  time: Float64Array | null;
  values: Float32Array[];
  /** samples written as infinity (over range) per channel */
  infinite: number[];
  /** samples written as NaN (missing) per channel, and the first lines they are on */
  missing: number[];
  missingLines: number[][];
  /** whether every value of a channel so far is a whole number (raw ADC codes?) */
  whole: boolean[];
  lastTime = -Infinity;
  raggedCount = 0;
  readonly raggedLines: number[] = [];
  firstRaggedDetail = "";
  private dayOffset = 0;
  /** metadata beside the data up to this line was read already (while the layout was decided) */
  notedThrough = 0;

  constructor(
    readonly layout: Layout,
    private readonly maxSamples: number,
    private readonly meta: Metadata,
    private readonly delimiter: () => string,
    private readonly names: () => string[],
  ) {
    this.cap = Math.min(4096, maxSamples);
    this.time = layout.timeIdx >= 0 ? new Float64Array(this.cap) : null;
    this.values = layout.valueIdx.map(() => new Float32Array(this.cap));
    this.infinite = layout.valueIdx.map(() => 0);
    this.missing = layout.valueIdx.map(() => 0);
    this.missingLines = layout.valueIdx.map(() => []);
    this.whole = layout.valueIdx.map(() => true);
  }

  ragged(rowLine: number, detail: string) {
    this.raggedCount++;
    if (this.raggedLines.length < LIST_LINES) this.raggedLines.push(rowLine);
    if (!this.firstRaggedDetail) this.firstRaggedDetail = detail;
  }

  /** Sizes the arrays for an expected number of samples (saves the doublings). */
  reserve(samples: number) {
    const est = Math.min(this.maxSamples, samples);
    if (est > this.cap) this.resize(est);
  }

  private grow(rowLine: number) {
    if (this.cap >= this.maxSamples) {
      throw new TraceParseError(
        "too-large",
        `the file has more than ${this.maxSamples.toLocaleString("en-US")} samples, the most a trace may have; export a shorter stretch of the capture or a lower sample rate`,
        rowLine,
      );
    }
    this.resize(Math.min(this.cap * 2, this.maxSamples));
  }

  private resize(next: number) {
    const n = this.n;
    if (this.time) {
      const t = new Float64Array(next);
      t.set(this.time.subarray(0, n));
      this.time = t;
    }
    this.values = this.values.map((v) => {
      const w = new Float32Array(next);
      w.set(v.subarray(0, n));
      return w;
    });
    this.cap = next;
  }

  private fieldLabel(col: number): string {
    const L = this.layout;
    return col === L.timeIdx
      ? `the time column (${columnLabel(col)})`
      : `${columnLabel(col)} (${quote(this.names()[L.valueIdx.indexOf(col)])})`;
  }

  private textError(rowLine: number, col: number, s: string): never {
    const nonDecimal = /^\s*0[xXbBoO]/.test(s)
      ? " in decimal notation (hexadecimal, binary and octal values are not read)"
      : "";
    throw new TraceParseError(
      "text-in-numeric-column",
      `${this.fieldLabel(col)} has ${quote(s)}, which is not a number${nonDecimal}`,
      rowLine,
    );
  }

  private rangeError(rowLine: number, col: number, s: string): never {
    const limit =
      col === this.layout.timeIdx
        ? "a time this reader can hold"
        : `the largest value a channel holds (±3.4e38, single precision)`;
    throw new TraceParseError(
      "value-out-of-range",
      `${this.fieldLabel(col)} has ${quote(s)}, which is beyond ${limit}; check the export's units or number format`,
      rowLine,
    );
  }

  /** The time of a row, in seconds; undefined when the field is empty. */
  private timeOf(rowLine: number, s: string): number | undefined {
    const L = this.layout;
    if (L.clock) {
      if (BLANK.test(s)) return undefined;
      let t = clockSeconds(s);
      if (Number.isNaN(t)) this.textError(rowLine, L.timeIdx, s);
      t += this.dayOffset;
      // a time of day without a date that passes midnight
      if (t < this.lastTime - 43_200 && !/\d[-/.]\d{1,2}[-/.]\d/.test(s)) {
        this.dayOffset += 86_400;
        t += 86_400;
      }
      return t;
    }
    const v = fieldNumber(s);
    if (v === undefined || isMissingField(s)) return undefined;
    if (v !== v) this.textError(rowLine, L.timeIdx, s);
    const tv = v * L.timeScale;
    if (!(tv - tv === 0)) this.rangeError(rowLine, L.timeIdx, s);
    return tv;
  }

  /** Metadata written in the columns beside the data (left of them). */
  private besideData(row: string[], rowLine: number) {
    const left = row.slice(0, this.layout.from);
    if (left.some((f) => !BLANK.test(f))) this.meta.note(left, rowLine, this.delimiter());
  }

  /** Reads rows[from…] as data rows. */
  rows(rows: string[][], from: number, cursor: RowCursor) {
    const L = this.layout;
    const nv = L.valueIdx.length;
    const vIdx = L.valueIdx;
    const tIdx = L.timeIdx;
    const width = L.to;
    const beside = L.from > 0;
    for (let r = from; r < rows.length; r++) {
      const row = rows[r];
      const rowLine = ++cursor.line;
      if (row.length === 1 && BLANK.test(row[0])) continue; // blank line
      if (beside && rowLine > this.notedThrough) this.besideData(row, rowLine);
      if (row.length !== width) {
        const count = effectiveCount(row);
        if (count === 0 || (beside && count <= L.from)) continue; // blank, or metadata only
        if (count !== width) {
          this.ragged(rowLine, `has ${count} ${plural(count, "column")}`);
          continue;
        }
      }
      if (this.n === this.cap) this.grow(rowLine);
      let tv = 0;
      if (tIdx >= 0) {
        const t = this.timeOf(rowLine, row[tIdx]);
        if (t === undefined) {
          this.ragged(rowLine, "has no time (an empty or NaN field)");
          continue;
        }
        tv = t;
        if (!(tv > this.lastTime)) {
          throw new TraceParseError(
            "time-not-increasing",
            `time goes from ${this.lastTime} s to ${tv} s; each time must be greater than the one before (check the export's time precision or sort the file)`,
            rowLine,
          );
        }
      }
      if (!this.valuesOf(row, rowLine, vIdx, nv)) {
        this.ragged(rowLine, "has an empty value");
        continue;
      }
      if (this.time) {
        this.time[this.n] = tv;
        this.lastTime = tv;
      }
      this.n++;
    }
  }

  /** Writes one row's values at sample n; false when a value is empty. */
  private valuesOf(row: string[], rowLine: number, vIdx: number[], nv: number): boolean {
    const n = this.n;
    for (let j = 0; j < nv; j++) {
      const col = vIdx[j];
      const s = row[col];
      const v = fieldNumber(s);
      if (v === undefined) return false;
      if (v !== v) {
        if (isMissingField(s)) {
          // a missing sample: kept as NaN here, filled in from its neighbours when the trace is finished
          this.values[j][n] = NaN;
          this.missing[j]++;
          if (this.missingLines[j].length < LIST_LINES) this.missingLines[j].push(rowLine);
          continue;
        }
        const sign = infiniteSign(s);
        if (sign === 0) this.textError(rowLine, col, s);
        this.values[j][n] = sign * Infinity;
        this.infinite[j]++;
        continue;
      }
      if (v > MAX_FLOAT32 || v < -MAX_FLOAT32) this.rangeError(rowLine, col, s);
      this.values[j][n] = v;
      if (this.whole[j] && v !== Math.floor(v)) this.whole[j] = false;
    }
    return true;
  }
}
