import { parseTraceText } from "../../../../shared/trace/parse";
import { TraceParseError, type ParsedTrace } from "../../../../shared/trace/types";

/** Bytes read from the start of a file for the instant preview (the server parses the whole file). */
export const PREVIEW_BYTES = 2 * 1024 * 1024;

export type TracePreview =
  | {
      ok: true;
      trace: ParsedTrace;
      /** only the first PREVIEW_BYTES were read */
      partial: boolean;
      /** samples in the whole file, estimated from the share read (exact when !partial) */
      estimatedSamples: number;
      /** the file has no time column: the sample rate must be stated (or came from a metadata line) */
      noTimeColumn: boolean;
      /** the sample rate came from the file (time column or metadata), not from the settings */
      rateFromFile: boolean;
      /** no rate known yet: parsed at 1 S/s only to show the shape (timing not meaningful) */
      placeholderRate: boolean;
    }
  | {
      ok: false;
      code: string;
      line: number | null;
      message: string;
      /** the only problem is the missing sample rate: ask for it */
      needsRate: boolean;
    };

/** The start of a file as text, cut at the last complete line when the file is longer. */
export async function readHead(
  file: File,
  bytes = PREVIEW_BYTES,
): Promise<{ text: string; partial: boolean; bytesRead: number }> {
  const partial = file.size > bytes;
  const blob = partial ? file.slice(0, bytes) : file;
  let text = await blob.text();
  let bytesRead = blob.size;
  if (partial) {
    const cut = text.lastIndexOf("\n");
    if (cut > 0) {
      text = text.slice(0, cut + 1);
      bytesRead = new TextEncoder().encode(text).length;
    }
  }
  return { text, partial, bytesRead };
}

/**
 * Parse the head of a file with the shared parser, the same rules as the server's. A file with no
 * time column is parsed again at the stated rate (or at 1 S/s just to show its shape).
 */
export function previewText(
  head: { text: string; partial: boolean; bytesRead: number },
  fileSize: number,
  statedRateHz?: number,
): TracePreview {
  const ratio = head.partial && head.bytesRead > 0 ? fileSize / head.bytesRead : 1;
  const finish = (
    trace: ParsedTrace,
    noTimeColumn: boolean,
    rateFromFile: boolean,
    placeholderRate = false,
  ): TracePreview => ({
    ok: true,
    trace,
    partial: head.partial,
    estimatedSamples: head.partial ? Math.round(trace.samples * ratio) : trace.samples,
    noTimeColumn,
    rateFromFile,
    placeholderRate,
  });
  try {
    const t = parseTraceText(head.text);
    const fromMetadata = t.warnings.some((w) => /no time column/i.test(w));
    return finish(t, fromMetadata, true);
  } catch (e) {
    if (!(e instanceof TraceParseError))
      return {
        ok: false,
        code: "unknown",
        line: null,
        message: e instanceof Error ? e.message : String(e),
        needsRate: false,
      };
    if (e.code !== "no-sample-rate")
      return { ok: false, code: e.code, line: e.line, message: e.message, needsRate: false };
    try {
      const stated = statedRateHz !== undefined && statedRateHz > 0;
      const t = parseTraceText(head.text, { sampleRateHz: stated ? statedRateHz : 1 });
      return finish(t, true, false, !stated);
    } catch (e2) {
      const pe = e2 instanceof TraceParseError ? e2 : null;
      return {
        ok: false,
        code: pe?.code ?? "unknown",
        line: pe?.line ?? null,
        message: e2 instanceof Error ? e2.message : String(e2),
        needsRate: true,
      };
    }
  }
}

/** Min/max of `values` in `buckets` equal slices, for a sparkline. */
export function minMaxBuckets(values: ArrayLike<number>, buckets: number): { min: number[]; max: number[] } {
  const n = values.length;
  const b = Math.max(1, Math.min(buckets, n));
  const min: number[] = new Array(b);
  const max: number[] = new Array(b);
  for (let k = 0; k < b; k++) {
    const a = Math.floor((k * n) / b);
    const e = Math.max(a + 1, Math.floor(((k + 1) * n) / b));
    let lo = Infinity;
    let hi = -Infinity;
    for (let i = a; i < e; i++) {
      const x = values[i];
      if (x < lo) lo = x;
      if (x > hi) hi = x;
    }
    min[k] = lo;
    max[k] = hi;
  }
  return { min, max };
}
