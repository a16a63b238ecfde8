/**
 * Streamed parse of a trace file from disk: the file is read in chunks, decoded as UTF-8 and fed
 * to the shared accumulator (papaparse chunk mode into growing typed arrays). The whole text is
 * never held in memory, and the parse yields to the event loop after every chunk so that other
 * requests (and other uploads) keep being served.
 */
import fs from "node:fs/promises";
import { TraceParseError, type ParsedTrace } from "../../shared/trace/types";
import { createTraceAccumulator, MAX_TRACE_FILE_BYTES, type ParseTraceOptions } from "../../shared/trace/parse";

export interface ParseTraceFileOptions extends ParseTraceOptions {
  /** refuse files larger than this (default MAX_TRACE_FILE_BYTES, 200 MiB) with code "too-large" */
  maxBytes?: number;
  /** bytes read per chunk (default 128 KiB: a few ms of work between yields) */
  chunkBytes?: number;
  /** stops the parse (rejects with the signal's reason) */
  signal?: AbortSignal;
}

const yieldToLoop = () => new Promise<void>((resolve) => setImmediate(resolve));

function mib(bytes: number): string {
  return `${Math.round((bytes / (1024 * 1024)) * 10) / 10} MiB`;
}

/** Parses the CSV/TSV file at `file`. Throws TraceParseError (see shared/trace/parse). */
export async function parseTraceFile(file: string, opts: ParseTraceFileOptions = {}): Promise<ParsedTrace> {
  const maxBytes = opts.maxBytes ?? MAX_TRACE_FILE_BYTES;
  const chunkBytes = opts.chunkBytes ?? 128 * 1024;
  const fh = await fs.open(file, "r");
  try {
    const { size } = await fh.stat();
    if (size > maxBytes) {
      throw new TraceParseError("too-large", `the file is ${mib(size)}; the limit is ${mib(maxBytes)}`, null);
    }
    const acc = createTraceAccumulator({ ...opts, totalChars: opts.totalChars ?? size });
    const decoder = new TextDecoder("utf-8");
    const buf = new Uint8Array(chunkBytes);
    let position = 0;
    for (;;) {
      opts.signal?.throwIfAborted();
      const { bytesRead } = await fh.read(buf, 0, chunkBytes, position);
      if (bytesRead === 0) break;
      position += bytesRead;
      if (position > maxBytes) {
        throw new TraceParseError("too-large", `the file is over the limit of ${mib(maxBytes)}`, null);
      }
      acc.pushText(decoder.decode(buf.subarray(0, bytesRead), { stream: true }));
      await yieldToLoop();
    }
    acc.pushText(decoder.decode());
    return acc.finish();
  } finally {
    await fh.close();
  }
}
