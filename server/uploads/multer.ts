import crypto from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import type { Request, RequestHandler } from "express";
import multer, { MulterError, type StorageEngine } from "multer";
import { unsupported } from "../http/errors";
import { checkTextStart, detectImageType, IMAGE_SNIFF_BYTES, TEXT_SNIFF_BYTES, type ImageMime } from "./magic";

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

  _handleFile(_req: Request, file: Express.Multer.File, cb: (error?: any, info?: Partial<Express.Multer.File> & { sha256?: string; detected?: string | null }) => void): void {
    const stream = file.stream;
    if (stream.destroyed) return cb(new MulterError("LIMIT_UNEXPECTED_FILE" as any));
    fs.mkdirSync(this.dir, { recursive: true });
    const filename = `${crypto.randomBytes(16).toString("hex")}.part`;
    const target = path.join(this.dir, filename);
    // Set before writing, so multer's own abort cleanup (it removes pending files that have a path) finds it.
    file.path = target;
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
      out.destroy();
      fs.rm(target, { force: true }, () => cb(err));
    };
    const runSniff = (): boolean => {
      sniffed = true;
      const buf = Buffer.concat(head, headLength);
      head = [];
      try {
        detected = this.sniff(buf);
        return true;
      } catch (err) {
        fail(err);
        return false;
      }
    };

    stream.on("data", (chunk: Buffer) => {
      if (settled) return;
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
      if ((stream as any).truncated) return fail(new MulterError("LIMIT_FILE_SIZE", file.fieldname));
      if (!sniffed && !runSniff()) return;
      out.end();
    });
    stream.on("error", fail);
    out.on("error", fail);
    out.on("close", () => {
      if (settled) return;
      settled = true;
      cb(null, { path: target, destination: this.dir, filename, size, sha256: hash.digest("hex"), detected });
    });
  }

  _removeFile(_req: Request, file: Express.Multer.File, cb: (error: Error | null) => void): void {
    if (!file.path) return cb(null);
    fs.rm(file.path, { force: true }, (err) => cb(err ?? null));
  }
}

export function textSniffer(head: Buffer): string | null {
  const r = checkTextStart(head.subarray(0, TEXT_SNIFF_BYTES));
  if (!r.ok) throw unsupported(`${r.reason} Upload the scope's CSV or TSV export.`);
  return "text";
}

export function imageSniffer(head: Buffer): ImageMime {
  const type = detectImageType(head);
  if (!type) throw unsupported("This file is not a JPEG, PNG or WebP image (judged by its content, not its name).");
  return type;
}

/** One file in field `file` plus a few small text fields; everything else is refused by multer. */
export function singleFileUpload(opts: { tempDir: string; maxBytes: number; kind: "text" | "image" }): RequestHandler {
  const storage =
    opts.kind === "text"
      ? new HashingDiskStorage(opts.tempDir, TEXT_SNIFF_BYTES, textSniffer)
      : new HashingDiskStorage(opts.tempDir, IMAGE_SNIFF_BYTES, imageSniffer);
  return multer({
    storage,
    limits: { fileSize: opts.maxBytes, files: 1, fields: 8, fieldSize: 64 * 1024, parts: 10, fieldNameSize: 100 },
  }).single("file");
}

/** The upload multer stored for this request, if any. */
export function uploadedFile(req: Request): StoredUpload | null {
  const f = req.file as (Express.Multer.File & { sha256?: string; detected?: string | null }) | undefined;
  if (!f || !f.path || !f.sha256) return null;
  return { path: f.path, size: f.size, sha256: f.sha256, originalname: f.originalname ?? "", detected: f.detected ?? null };
}

/** Removes temp files a crash left behind (older than maxAgeMs). Never touches anything else. */
export function sweepStaleUploads(tempDir: string, maxAgeMs = 60 * 60 * 1000, now = Date.now()): number {
  let removed = 0;
  let names: string[];
  try {
    names = fs.readdirSync(tempDir);
  } catch {
    return 0;
  }
  for (const name of names) {
    if (!name.endsWith(".part")) continue;
    const p = path.join(tempDir, name);
    try {
      if (now - fs.statSync(p).mtimeMs > maxAgeMs) {
        fs.rmSync(p, { force: true });
        removed++;
      }
    } catch {
      /* gone already */
    }
  }
  return removed;
}
