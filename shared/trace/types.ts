/** One measured channel of a capture, values in the file's unit (volts unless said otherwise). */
export interface TraceChannel {
  name: string;
  unit: string | null;
  values: Float32Array;
  min: number;
  max: number;
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
