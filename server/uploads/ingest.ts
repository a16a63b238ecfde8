/**
 * The work done on a capture once its bytes have arrived, in one pass over the file: gunzip when
 * the body is gzip (RFC 1952), count the bytes against the size limit and the compression-ratio
 * bound, check that the text start is CSV/TSV text, hash the plain bytes (SHA-256: the file as the
 * tech has it), keep the original compressed (gzip the plain bytes when they arrived plain), feed
 * the text to the shared parser, store the channels with their min/max pyramid, then measure.
 *
 * Pure Node code with no database: it runs in a pool thread (server/uploads/pool-tasks.ts) and, for
 * the bench's baseline, on the main thread. A refusal is returned as a value (an Error's custom
 * fields do not survive the trip between threads); whatever this pass wrote is removed first.
 */
import crypto from "node:crypto";
import fs from "node:fs";
import fsp from "node:fs/promises";
import path from "node:path";
import zlib from "node:zlib";
import { Readable } from "node:stream";
import type { MessagePort } from "node:worker_threads";
import { createTraceAccumulator } from "../../shared/trace/parse";
import { TraceParseError, type ParsedTrace, type TraceChannelMeta } from "../../shared/trace/types";
import { analyzeTrace } from "../../shared/analysis/analyze";
import type { CaptureSettings } from "../../shared/schemas/capture-settings";
import { storedChannels, writeTraceData } from "../traces/store";
import { checkTextStart, TEXT_SNIFF_BYTES } from "./magic";

/**
 * Largest accepted ratio of plain to compressed bytes. Deflate can reach about 1032:1 (a run of one
 * byte value), which is how a small body becomes gigabytes; scope exports compress 3–10:1 (the
 * instrument exports in /work/shared/real-exports: 3.4 to 10.1 with gzip -6), so 100:1 leaves ten
 * times that room.
 */
export const MAX_COMPRESSION_RATIO = 100;
/** Plain bytes allowed before the ratio is enforced, so tiny files of one repeated line pass. */
export const RATIO_SLACK_BYTES = 1024 * 1024;
/** gzip magic (RFC 1952, section 2.3.1: ID1 = 0x1f, ID2 = 0x8b). */
export const GZIP_MAGIC = [0x1f, 0x8b] as const;
/** Compression level of originals that arrive plain: level 1 keeps the pass fast (zlib's fastest). */
const ORIGINAL_GZIP_LEVEL = 1;
const READ_CHUNK = 256 * 1024;

export type BodyEncoding = "gzip" | "identity";

export interface IngestJob {
  /** absolute path of the bytes as received */
  source: string;
  /** how the body is encoded; "auto" looks for the gzip magic */
  encoding: BodyEncoding | "auto";
  /** where a compressed copy of a plain body is written (a `.part` file, moved by the caller) */
  tempDir: string;
  /** where the channel file goes: `<tracesDir>/<traceId>.trace` */
  tracesDir: string;
  traceId: string;
  settings: CaptureSettings;
  /** most plain bytes accepted */
  maxBytes: number;
  maxRatio?: number;
  /** stage and fraction reports while the job runs */
  progress?: MessagePort;
  /** skip the measurement (tests of the store alone) */
  skipAnalysis?: boolean;
}

export interface IngestRefusal {
  status: 400 | 413 | 415;
  code: string;
  message: string;
  details?: Record<string, unknown>;
}

export interface IngestMeta {
  samples: number;
  sampleRateHz: number;
  t0: number;
  durationS: number;
  channels: TraceChannelMeta[];
  warnings: string[];
}

export type IngestResult =
  | {
      ok: true;
      meta: IngestMeta;
      analysis: Record<string, unknown> | null;
      analysisError: string | null;
      /** SHA-256 of the plain bytes */
      sha256: string;
      /** plain bytes */
      plainBytes: number;
      /** the compressed original: the source itself (gzip bodies) or a new `.part` file */
      original: { path: string; bytes: number; isSource: boolean };
      dataFile: string;
      timings: { parseMs: number; storeMs: number; analysisMs: number };
    }
  | { ok: false; refusal: IngestRefusal };

export type IngestStage = "checking" | "measuring";
export interface IngestProgress {
  stage: IngestStage;
  /** share of the received bytes read so far (checking) */
  fraction?: number;
}

class Refused extends Error {
  constructor(readonly refusal: IngestRefusal) {
    super(refusal.message);
  }
}

function mib(bytes: number): string {
  return bytes >= 1024 * 1024
    ? `${Math.round((bytes / (1024 * 1024)) * 10) / 10} MiB`
    : `${Math.round(bytes / 1024)} KiB`;
}

export function isGzipStart(head: Uint8Array): boolean {
  return head.length >= 2 && head[0] === GZIP_MAGIC[0] && head[1] === GZIP_MAGIC[1];
}

/** A parser refusal in the API's shape: 413 for size, else 400 naming the line and the reason. */
export function parseRefusal(err: TraceParseError): IngestRefusal {
  if (err.code === "too-large")
    return { status: 413, code: "too_large", message: `The trace file is too large: ${err.message}.` };
  return {
    status: 400,
    code: "trace_unreadable",
    message: `The trace file was refused: ${err.message}.`,
    details: { reason: err.code, line: err.line },
  };
}

async function readAt(file: string, n: number, fromEnd = false): Promise<Buffer> {
  const fh = await fsp.open(file, "r");
  try {
    const size = fromEnd ? (await fh.stat()).size : 0;
    const buf = Buffer.alloc(n);
    const { bytesRead } = await fh.read(buf, 0, n, fromEnd ? Math.max(0, size - n) : 0);
    return buf.subarray(0, bytesRead);
  } finally {
    await fh.close();
  }
}

/**
 * The plain size a gzip file states in its last member's trailer (ISIZE: the input size modulo
 * 2^32, little-endian; RFC 1952 section 2.3.1). Only a hint for sizing the parser's arrays.
 */
async function gzipSizeHint(file: string, maxBytes: number): Promise<number | undefined> {
  const tail = await readAt(file, 4, true);
  if (tail.length < 4) return undefined;
  const n = tail.readUInt32LE(0);
  return n > 0 && n <= maxBytes ? n : undefined;
}

/** Counts plain bytes against the size limit and (gzip) the ratio bound; sniffs the first bytes. */
class PlainCheck {
  plain = 0;
  private head: Buffer[] = [];
  private headLength = 0;
  private sniffed = false;

  constructor(
    private readonly maxBytes: number,
    private readonly maxRatio: number,
    private readonly gzip: boolean,
  ) {}

  take(chunk: Buffer, compressedSoFar: number): void {
    this.plain += chunk.length;
    if (this.plain > this.maxBytes) {
      throw new Refused({
        status: 413,
        code: "too_large",
        message: `The trace file is over the ${mib(this.maxBytes)} limit${this.gzip ? " once decompressed" : ""}.`,
        details: { reason: "size", limitBytes: this.maxBytes },
      });
    }
    if (this.gzip && this.plain > this.maxRatio * compressedSoFar + RATIO_SLACK_BYTES) this.ratioRefusal();
    if (!this.sniffed) {
      this.head.push(chunk);
      this.headLength += chunk.length;
      if (this.headLength >= TEXT_SNIFF_BYTES) this.sniff(compressedSoFar);
    }
  }

  private ratioRefusal(): never {
    throw new Refused({
      status: 413,
      code: "too_large",
      message:
        `The compressed file expands more than ${this.maxRatio} times; a scope export never does. ` +
        "Send it uncompressed.",
      details: { reason: "compression-ratio", maxRatio: this.maxRatio },
    });
  }

  sniff(compressedSoFar: number): void {
    if (this.sniffed) return;
    this.sniffed = true;
    const head = Buffer.concat(this.head, this.headLength).subarray(0, TEXT_SNIFF_BYTES);
    this.head = [];
    const r = checkTextStart(head);
    if (r.ok) return;
    // a body that already expands beyond the bound is refused as what it is, whatever it holds
    if (this.gzip && this.plain > this.maxRatio * compressedSoFar) this.ratioRefusal();
    throw new Refused({
      status: 415,
      code: "unsupported_type",
      message: `${r.reason} Upload the scope's CSV or TSV export.`,
    });
  }
}

/**
 * Destroys a file write stream and calls `then` once it has closed (at once if it already has). A
 * stream destroyed while its open is still on the way opens, then closes: the file exists until then.
 */
export function afterClose(out: fs.WriteStream, then: () => void): void {
  if (out.closed) return then();
  out.once("close", then);
  out.destroy();
}

/** Writes the plain bytes gzip-compressed to `file`; `done()` waits for the last byte on disk. */
function compressTo(file: string) {
  const gz = zlib.createGzip({ level: ORIGINAL_GZIP_LEVEL });
  const out = fs.createWriteStream(file, { flags: "wx" });
  gz.pipe(out);
  let failed: Error | null = null;
  gz.on("error", (e) => (failed = e));
  out.on("error", (e) => (failed = e));
  return {
    async write(chunk: Buffer): Promise<void> {
      if (failed) throw failed;
      if (!gz.write(chunk)) await new Promise<void>((r) => gz.once("drain", r));
    },
    async done(): Promise<number> {
      await new Promise<void>((resolve, reject) => {
        out.once("close", () => (failed ? reject(failed) : resolve()));
        out.once("error", reject);
        gz.end();
      });
      return out.bytesWritten;
    },
    /** resolves once the file is closed, so that removing it then leaves nothing */
    destroy(): Promise<void> {
      gz.destroy();
      return new Promise<void>((r) => afterClose(out, r));
    },
  };
}

/** The received bytes: the whole file, or (while it still arrives) its growing tail. */
interface ByteSource {
  input: Readable;
  /** the file's size when known (progress, array sizing) */
  bytes: number | null;
  /** plain size estimate for sizing the parser's arrays */
  sizeHint?: number;
}

/**
 * Reads the source once: plain chunks go to the check, the hash, the compressed copy (plain
 * bodies) and the parser. A refusal or a parser error stops the reading at once.
 */
async function readAndParse(job: IngestJob, gzip: boolean, compressedCopy: string | null, src: ByteSource) {
  const sourceBytes = src.bytes;
  const check = new PlainCheck(job.maxBytes, job.maxRatio ?? MAX_COMPRESSION_RATIO, gzip);
  const hash = crypto.createHash("sha256");
  const acc = createTraceAccumulator({ sampleRateHz: job.settings.sampleRateHz, totalChars: src.sizeHint });
  const decoder = new TextDecoder("utf-8");
  const copy = compressedCopy ? compressTo(compressedCopy) : null;
  const input = src.input;
  const gunzip = gzip ? zlib.createGunzip({ chunkSize: 64 * 1024 }) : null;
  let sourceRead = 0;
  let lastReport = 0;
  input.on("data", (c: Buffer | string) => {
    sourceRead += c.length;
  });
  // compressed bytes the inflater has consumed (not merely read from disk)
  const consumed = () => (gunzip ? gunzip.bytesWritten : sourceRead);
  const plain: AsyncIterable<Buffer> = gunzip ? input.pipe(gunzip) : input;
  input.on("error", (e) => gunzip?.destroy(e));
  try {
    for await (const chunk of plain) {
      check.take(chunk, consumed());
      hash.update(chunk);
      if (copy) await copy.write(chunk);
      acc.pushText(decoder.decode(chunk, { stream: true }));
      const fraction = sourceBytes ? Math.min(1, consumed() / Math.max(1, sourceBytes)) : 0;
      if (sourceBytes && fraction - lastReport >= 0.02) {
        lastReport = fraction;
        job.progress?.postMessage({ stage: "checking", fraction } satisfies IngestProgress);
      }
    }
    check.sniff(consumed());
    acc.pushText(decoder.decode());
    const trace = acc.finish();
    const copyBytes = copy ? await copy.done() : consumed();
    return { trace, plainBytes: check.plain, sha256: hash.digest("hex"), copyBytes };
  } catch (err) {
    await copy?.destroy();
    throw err;
  } finally {
    input.destroy();
    gunzip?.destroy();
  }
}

function gzipError(err: unknown): IngestRefusal | null {
  const code = (err as { code?: string } | null)?.code;
  if (typeof code === "string" && code.startsWith("Z_")) {
    return {
      status: 400,
      code: "bad_upload",
      message: "The compressed body is damaged or cut short (not a complete gzip stream).",
    };
  }
  return null;
}

/**
 * Runs the whole pass over a file already received. Never throws for a refusal; throws only for
 * faults of the server itself.
 */
export async function ingestCapture(job: IngestJob): Promise<IngestResult> {
  const gzip = job.encoding === "auto" ? isGzipStart(await readAt(job.source, 2)) : job.encoding === "gzip";
  const bytes = (await fsp.stat(job.source)).size;
  const input = fs.createReadStream(job.source, { highWaterMark: READ_CHUNK });
  return ingestFrom(job, gzip, { input, bytes, sizeHint: gzip ? await gzipSizeHint(job.source, job.maxBytes) : bytes });
}

async function ingestFrom(job: IngestJob, gzip: boolean, src: ByteSource): Promise<IngestResult> {
  const copyPath = gzip ? null : path.join(job.tempDir, `${job.traceId}.gz.part`);
  const dataTarget = path.join(job.tracesDir, `${job.traceId}.trace`);
  let dataFile: string | null = null;
  try {
    const t0 = performance.now();
    const read = await readAndParse(job, gzip, copyPath, src);
    let trace: ParsedTrace | null = read.trace;
    const t1 = performance.now();
    await fsp.mkdir(job.tracesDir, { recursive: true });
    dataFile = (await writeTraceData(job.tracesDir, job.traceId, trace)).path;
    const t2 = performance.now();
    const meta: IngestMeta = {
      samples: trace.samples,
      sampleRateHz: trace.sampleRateHz,
      t0: trace.t0,
      durationS: trace.durationS,
      channels: storedChannels(trace),
      warnings: trace.warnings,
    };
    let analysis: Record<string, unknown> | null = null;
    let analysisError: string | null = null;
    if (!job.skipAnalysis) {
      job.progress?.postMessage({ stage: "measuring" } satisfies IngestProgress);
      try {
        analysis = analyzeTrace(trace, job.settings) as unknown as Record<string, unknown>;
      } catch (err) {
        analysisError = err instanceof Error ? err.message : String(err);
      }
    }
    trace = null;
    const t3 = performance.now();
    return {
      ok: true,
      meta,
      analysis,
      analysisError,
      sha256: read.sha256,
      plainBytes: read.plainBytes,
      original: { path: copyPath ?? job.source, bytes: read.copyBytes, isSource: !copyPath },
      dataFile,
      timings: { parseMs: t1 - t0, storeMs: t2 - t1, analysisMs: t3 - t2 },
    };
  } catch (err) {
    src.input.destroy();
    if (copyPath) await fsp.rm(copyPath, { force: true }).catch(() => {});
    await fsp.rm(dataFile ?? dataTarget, { force: true }).catch(() => {});
    if (err instanceof Refused) return { ok: false, refusal: err.refusal };
    if (err instanceof TraceParseError) return { ok: false, refusal: parseRefusal(err) };
    const z = gzipError(err);
    if (z) return { ok: false, refusal: z };
    throw err;
  }
}

// ---------------------------------------------------------------------------------------------
// Following an upload while it arrives

/** Messages from the event loop to a follower: more bytes are on disk; all of them are; stop. */
export type FollowMessage = { type: "grow"; bytes: number } | { type: "end"; bytes: number } | { type: "abort" };

export interface FollowJob extends IngestJob {
  /** where the event loop says how far the file has grown (FollowMessage) */
  control: MessagePort;
}

/** Thrown into a follower told to stop (the upload was abandoned or removed). */
export class FollowAborted extends Error {
  constructor() {
    super("the follower was stopped");
    this.name = "FollowAborted";
  }
}

/**
 * The bytes of a file that is still being written, in order, as the event loop reports them on
 * `control`: reads what is announced (and on disk), waits for more, ends at the announced end.
 */
async function* tailOf(file: string, control: MessagePort): AsyncGenerator<Buffer> {
  let available = 0;
  let ended = false;
  let aborted = false;
  let wake: (() => void) | null = null;
  control.on("message", (m: FollowMessage) => {
    if (m.type === "abort") aborted = true;
    else {
      available = Math.max(available, m.bytes);
      if (m.type === "end") ended = true;
    }
    wake?.();
  });
  const fh = await fsp.open(file, "r");
  let pos = 0;
  try {
    for (;;) {
      if (aborted) throw new FollowAborted();
      if (available > pos) {
        const b = Buffer.allocUnsafe(Math.min(READ_CHUNK, available - pos));
        const { bytesRead } = await fh.read(b, 0, b.length, pos);
        if (bytesRead > 0) {
          pos += bytesRead;
          yield b.subarray(0, bytesRead);
          continue;
        }
      }
      if (ended && pos >= available) return;
      // announced bytes may still be on their way to the disk: look again shortly
      await new Promise<void>((r) => {
        wake = r;
        setTimeout(r, 200);
      });
      wake = null;
    }
  } finally {
    control.close();
    await fh.close();
  }
}

/**
 * The same pass as ingestCapture over a resumable upload while its bytes still arrive, so that
 * when the last one is in only the last piece, the channel file and the measurement remain. A
 * refusal (not text, a bomb, a parser error) comes back at once, before the rest is sent.
 */
export async function followCapture(job: FollowJob): Promise<IngestResult> {
  const chunks = tailOf(job.source, job.control);
  let first = await chunks.next();
  let gzip = job.encoding === "gzip";
  if (job.encoding === "auto" && !first.done) {
    while (!first.done && first.value.length < 2) {
      const more = await chunks.next();
      first = more.done ? first : { done: false, value: Buffer.concat([first.value, more.value]) };
      if (more.done) break;
    }
    gzip = !first.done && isGzipStart(first.value);
  }
  async function* all(): AsyncGenerator<Buffer> {
    if (!first.done) yield first.value;
    yield* chunks;
  }
  return ingestFrom(job, gzip, { input: Readable.from(all()), bytes: null });
}
