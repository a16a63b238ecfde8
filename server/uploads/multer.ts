import crypto from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import { Transform, type Readable } from "node:stream";
import zlib from "node:zlib";
import type { Request, RequestHandler } from "express";
import multer, { MulterError, type StorageEngine } from "multer";
import { HttpError, unsupported } from "../http/errors";
import { holdFile } from "../services/storage";
import { checkTextStart, detectImageType, IMAGE_SNIFF_BYTES, TEXT_SNIFF_BYTES, type ImageMime } from "./magic";
import { afterClose, isGzipStart, MAX_COMPRESSION_RATIO, RATIO_SLACK_BYTES } from "./ingest";

/** What an upload became: a temp file inside the data directory, hashed while it was written. */
export interface StoredUpload {
  /** absolute path of the temp file (removed by the route's finally, or by multer on abort) */
  path: string;
  size: number;
  sha256: string;
  /** the name on the uploader's computer, for display only */
  originalname: string;
  /** what the first bytes say (photos: the image type) */
  detected: string | null;
}

/** Set on a request whose body is being inflated (Content-Encoding: gzip). */
const INFLATED_BODY = Symbol("inflatedBody");

function ratioRefusal(): HttpError {
  return new HttpError(
    413,
    "too_large",
    `The compressed body expands more than ${MAX_COMPRESSION_RATIO} times; a scope export never does.`,
    {
      reason: "compression-ratio",
      maxRatio: MAX_COMPRESSION_RATIO,
    },
  );
}

/** Decides from the first bytes whether to keep the upload; returns what it is, or throws. */
type Sniffer = (head: Buffer) => string | null;

/**
 * A multer storage engine that streams the file to a temp file under `dir` with a server-made
 * name, computes its SHA-256 on the way, and checks its first bytes as soon as they arrive so a
 * wrong kind of file is refused (415) without storing the rest. On any failure — refused content,
 * a size limit (busboy truncates the stream), an aborted request — it removes its own temp file.
 */
export class HashingDiskStorage implements StorageEngine {
  constructor(
    private readonly dir: string,
    private readonly sniffBytes: number,
    private readonly sniff: Sniffer,
  ) {}

  _handleFile(
    req: Request,
    file: Express.Multer.File,
    cb: (
      error?: Error | null,
      info?: Partial<Express.Multer.File> & { sha256?: string; detected?: string | null },
    ) => void,
  ): void {
    const stream = file.stream;
    if (stream.destroyed) return cb(new MulterError("LIMIT_UNEXPECTED_FILE"));
    fs.mkdirSync(this.dir, { recursive: true });
    const filename = `${crypto.randomBytes(16).toString("hex")}.part`;
    const target = path.join(this.dir, filename);
    // Set before writing, so multer's own abort cleanup (it removes pending files that have a path) finds it.
    file.path = target;
    // the reconcile leaves the file alone while this request (and the route after it) uses it
    const release = holdFile(target);
    const out = fs.createWriteStream(target, { flags: "wx" });
    const hash = crypto.createHash("sha256");
    let size = 0;
    let head: Buffer[] = [];
    let headLength = 0;
    let detected: string | null = null;
    let sniffed = false;
    let settled = false;

    const fail = (err: unknown) => {
      if (settled) return;
      settled = true;
      stream.removeAllListeners("data");
      stream.resume(); // let busboy carry on past this part
      // removed once the write stream has closed: its open may still be on the way, and a file
      // removed before it would be created afterwards and left behind
      afterClose(out, () =>
        fs.rm(target, { force: true }, () => {
          release();
          cb(err as Error); // what was thrown or emitted, passed on as it is (multer hands it to the error handler)
        }),
      );
    };
    const runSniff = (): boolean => {
      sniffed = true;
      const buf = Buffer.concat(head, headLength);
      head = [];
      try {
        detected = this.sniff(buf);
        return true;
      } catch (err) {
        // In a gzip-encoded body the refusal waits a little: a bomb (which is also "binary")
        // is refused as what it is once the inflater's count shows it (413, not 415).
        if ((req as Request & { [INFLATED_BODY]?: unknown })[INFLATED_BODY]) deferred = { err, skipped: 0 };
        else fail(err);
        return false;
      }
    };
    let deferred: { err: unknown; skipped: number } | null = null;

    stream.on("data", (chunk: Buffer) => {
      if (settled) return;
      if (deferred) {
        deferred.skipped += chunk.length;
        if (deferred.skipped > 2 * RATIO_SLACK_BYTES) fail(deferred.err);
        return;
      }
      if (!sniffed) {
        head.push(chunk);
        headLength += chunk.length;
        if (headLength >= this.sniffBytes && !runSniff()) return;
      }
      hash.update(chunk);
      size += chunk.length;
      if (!out.write(chunk)) {
        stream.pause();
        out.once("drain", () => stream.resume());
      }
    });
    stream.on("end", () => {
      if (settled) return;
      if (deferred) return fail(deferred.err);
      if ((stream as Readable & { truncated?: boolean }).truncated)
        return fail(new MulterError("LIMIT_FILE_SIZE", file.fieldname));
      if (!sniffed && !runSniff()) return;
      out.end();
    });
    stream.on("error", fail);
    out.on("error", fail);
    out.on("close", () => {
      if (settled) return;
      settled = true;
      heldUploads.set(target, release);
      cb(null, { path: target, destination: this.dir, filename, size, sha256: hash.digest("hex"), detected });
    });
  }

  _removeFile(_req: Request, file: Express.Multer.File, cb: (error: Error | null) => void): void {
    if (!file.path) return cb(null);
    const p = file.path;
    fs.rm(p, { force: true }, (err) => {
      releaseUpload(p);
      cb(err ?? null);
    });
  }
}

/** Stored temp files still in use, with the function that lets the reconcile see them again. */
const heldUploads = new Map<string, () => void>();

/** The route is done with the temp file (removed, or moved into place). */
export function releaseUpload(p: string): void {
  heldUploads.get(p)?.();
  heldUploads.delete(p);
}

export function textSniffer(head: Buffer): string | null {
  const r = checkTextStart(head.subarray(0, TEXT_SNIFF_BYTES));
  if (!r.ok) throw unsupported(`${r.reason} Upload the scope's CSV or TSV export.`);
  return "text";
}

/** A trace file: gzip (checked once decompressed, in the pipeline) or CSV/TSV text. */
export function traceSniffer(head: Buffer): string | null {
  if (isGzipStart(head)) return "gzip";
  return textSniffer(head);
}

export function imageSniffer(head: Buffer): ImageMime {
  const type = detectImageType(head);
  if (!type) throw unsupported("This file is not a JPEG, PNG or WebP image (judged by its content, not its name).");
  return type;
}

/**
 * Feeds a request body whose Content-Encoding is gzip to busboy through an inflater that counts
 * what comes out: more than MAX_COMPRESSION_RATIO times what went in (after RATIO_SLACK_BYTES), or
 * more than `maxPlain` bytes, stops it with 413 before the bytes reach the disk.
 */
function gzipBodyHandler(maxPlain: number) {
  return (req: Request, busboy: NodeJS.WritableStream & { destroy(err?: Error): void }) => {
    const encoding = String(req.headers["content-encoding"] ?? "identity")
      .trim()
      .toLowerCase();
    if (encoding === "identity" || encoding === "") return void req.pipe(busboy);
    if (encoding !== "gzip" && encoding !== "x-gzip") {
      busboy.destroy(
        unsupported(`Content-Encoding "${encoding}" is not accepted; send the body as it is or gzip-compressed.`),
      );
      return;
    }
    const gunzip = zlib.createGunzip();
    let plain = 0;
    (req as Request & { [INFLATED_BODY]?: boolean })[INFLATED_BODY] = true;
    const meter = new Transform({
      transform(chunk: Buffer, _enc, cb) {
        plain += chunk.length;
        if (plain > MAX_COMPRESSION_RATIO * gunzip.bytesWritten + RATIO_SLACK_BYTES) return cb(ratioRefusal());
        if (plain > maxPlain)
          return cb(
            new HttpError(413, "too_large", "The request body is over the size limit once decompressed.", {
              reason: "size",
            }),
          );
        cb(null, chunk);
      },
    });
    const stop = (err: Error) => {
      req.unpipe(gunzip);
      gunzip.unpipe(meter);
      meter.unpipe(busboy);
      busboy.destroy(err);
    };
    gunzip.on("error", (err) =>
      stop(new HttpError(400, "bad_upload", `The gzip-compressed body is damaged or cut short: ${err.message}.`)),
    );
    meter.on("error", stop);
    req.pipe(gunzip).pipe(meter).pipe(busboy);
  };
}

/**
 * One file in field `file` plus a few small text fields; everything else is refused by multer.
 * File names are read as UTF-8 (what browsers send, RFC 7578 section 4.2), not Latin-1.
 */
export function singleFileUpload(opts: {
  tempDir: string;
  maxBytes: number;
  kind: "text" | "image" | "trace";
}): RequestHandler {
  const storage =
    opts.kind === "trace"
      ? new HashingDiskStorage(opts.tempDir, TEXT_SNIFF_BYTES, traceSniffer)
      : opts.kind === "text"
        ? new HashingDiskStorage(opts.tempDir, TEXT_SNIFF_BYTES, textSniffer)
        : new HashingDiskStorage(opts.tempDir, IMAGE_SNIFF_BYTES, imageSniffer);
  // the parts around the file (boundaries, headers, the settings field) are small
  const maxPlainBody = opts.maxBytes + 256 * 1024;
  // defParamCharset and streamHandler are multer 2 options its type declarations do not list yet
  const options = {
    storage,
    defParamCharset: "utf8",
    streamHandler: opts.kind === "trace" ? gzipBodyHandler(maxPlainBody) : undefined,
    limits: { fileSize: opts.maxBytes, files: 1, fields: 8, fieldSize: 64 * 1024, parts: 10, fieldNameSize: 100 },
  } as multer.Options;
  return multer(options).single("file");
}

/**
 * A failure while reading the trace's multipart body (runMiddleware has mapped malformed bodies):
 * the size limit in words.
 */
export function multipartFailure(err: unknown, limitText: string): unknown {
  const e = err as { name?: string; code?: string } | null;
  if (e?.name === "MulterError" && e.code === "LIMIT_FILE_SIZE")
    return new HttpError(413, "too_large", `The file is over the ${limitText} limit.`);
  return err;
}

/** The upload multer stored for this request, if any. */
export function uploadedFile(req: Request): StoredUpload | null {
  const f = req.file as (Express.Multer.File & { sha256?: string; detected?: string | null }) | undefined;
  if (!f || !f.path || !f.sha256) return null;
  return {
    path: f.path,
    size: f.size,
    sha256: f.sha256,
    originalname: f.originalname ?? "",
    detected: f.detected ?? null,
  };
}
