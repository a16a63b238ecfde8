/** Where a channel's unit was read: the header (names or units row), a metadata line, or nowhere. */
export type UnitOrigin = "header" | "metadata" | "none";

/**
 * One measured channel of a capture, values in the file's unit (volts unless said otherwise). The
 * unit is normalised (shared/trace/units normaliseUnit: "Volt" → "V", "(mV)" → "mV"); null means
 * the file states none (read as volts).
 */
export interface TraceChannel {
  name: string;
  unit: string | null;
  values: Float32Array;
  min: number;
  max: number;
  /** the unit as the file wrote it, when normalising changed it ("Volt", "mv") */
  unitWritten?: string | null;
  /** where the unit was read */
  unitFrom?: UnitOrigin;
  /** how the stored values were derived from the file's numbers, when they were ("ADC codes × 40 mV (line 8)") */
  scaledFrom?: string | null;
}

/**
 * What is kept of a channel beside its samples (the trace's `channels` in the API and the database,
 * and the trace data file's header): name, normalised unit, extremes in that unit, and where the
 * unit came from.
 */
export interface TraceChannelMeta {
  name: string;
  /** normalised file unit ("V", "mV", "kV", "A", …); null: the file states none (volts) */
  unit: string | null;
  min: number;
  max: number;
  /** the unit as the file wrote it, when normalising changed it */
  unitWritten?: string | null;
  unitFrom?: UnitOrigin;
  /** how the values were derived from the file's numbers, when they were */
  scaledFrom?: string | null;
}

/** A channel's metadata (no samples), with only the optional fields that say something. */
export function channelMeta(c: Omit<TraceChannelMeta, "min" | "max"> & { min: number; max: number }): TraceChannelMeta {
  const out: TraceChannelMeta = { name: c.name, unit: c.unit, min: c.min, max: c.max };
  if (c.unitWritten) out.unitWritten = c.unitWritten;
  if (c.unitFrom) out.unitFrom = c.unitFrom;
  if (c.scaledFrom) out.scaledFrom = c.scaledFrom;
  return out;
}

/** Rows skipped because they had missing or extra columns (also named in the warnings). */
export interface DroppedRows {
  count: number;
  /** the first few of their line numbers (1-based), in file order */
  lines: number[];
}

/**
 * A parsed capture. Time is either uniform (t0 + i / sampleRateHz) or, when the file's time
 * column is not evenly spaced, given per sample in `time` (seconds).
 */
export interface ParsedTrace {
  samples: number;
  sampleRateHz: number;
  t0: number;
  durationS: number;
  time: Float64Array | null;
  channels: TraceChannel[];
  /** notes that did not stop the parse (e.g. a few ragged rows skipped), each naming its line */
  warnings: string[];
  /** rows skipped for missing or extra columns, when there were any */
  droppedRows?: DroppedRows | null;
}

/** A refusal that names the line (1-based, in the file) and the reason, in words a tech can act on. */
export class TraceParseError extends Error {
  readonly code: string;
  readonly line: number | null;
  constructor(code: string, message: string, line: number | null = null) {
    super(line != null ? `line ${line}: ${message}` : message);
    this.name = "TraceParseError";
    this.code = code;
    this.line = line;
  }
}

/** Time of sample i. */
export function sampleTime(trace: Pick<ParsedTrace, "time" | "t0" | "sampleRateHz">, i: number): number {
  return trace.time ? trace.time[i] : trace.t0 + i / trace.sampleRateHz;
}

/**
 * Min/max-decimated points of a time window, as returned by `GET /api/traces/:id/window`.
 * Bucket k covers [t0 + k·(t1−t0)/width, t0 + (k+1)·(t1−t0)/width); `t` holds the start of each
 * bucket that has samples (empty buckets are left out, in `t` and in every series alike), and
 * `min`/`max` are that bucket's extremes.
 */
export interface TraceWindow {
  t: number[];
  series: { name: string; min: number[]; max: number[] }[];
}
