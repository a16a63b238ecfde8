/**
 * Helpers of the upload tests: a generated capture as a scope's CSV export, resumable uploads
 * through the real tus client (tus-js-client, its Node build), a gzip bomb, and a listing of the
 * data folder to show that nothing was left behind.
 */
import fs from "node:fs";
import path from "node:path";
import zlib from "node:zlib";
import { Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import * as tus from "tus-js-client";
import { generateSecondary, renderCsv } from "../../demo/generators";
import type { HasPort } from "../factories/sign-in";

export const uploadSettings = { kind: "secondary-ignition", voltsPerDiv: 0.2, timePerDivS: 0.02 };

/**
 * A secondary-ignition capture as a scope would export it (time in seconds, one channel in volts).
 * Its truth comes from the generator's parameters: samples = rate × duration.
 */
export function captureCsv(opts: { seed?: number; sampleRateHz?: number; events?: number } = {}) {
  const g = generateSecondary({
    seed: opts.seed ?? 3,
    sampleRateHz: opts.sampleRateHz ?? 1e6,
    events: opts.events ?? 2,
  });
  const text = renderCsv(g.trace, { digits: 5 });
  return { text, bytes: Buffer.from(text, "utf8"), samples: g.trace.samples, sampleRateHz: g.trace.sampleRateHz };
}

/** Every file under `dir` except the SQLite files and the mail catcher's store (relative paths). */
export function dataFiles(dir: string): string[] {
  return (fs.readdirSync(dir, { recursive: true }) as string[])
    .filter((p) => !/^(test\.db|db\.sqlite)/.test(p) && !p.startsWith("mail"))
    .filter((p) => fs.statSync(path.join(dir, p)).isFile())
    .sort();
}

/**
 * gzip of `gib` GiB of zero bytes, streamed (never the whole input in memory): deflate's best case,
 * about 1032:1 (RFC 1951 allows a match of 258 bytes in a code of a few bits), so about 1 MB.
 */
export async function zeroBomb(file: string, gib = 1): Promise<number> {
  const block = Buffer.alloc(1 << 20);
  let left = gib * 1024;
  const src = new Readable({
    read() {
      this.push(left-- > 0 ? block : null);
    },
  });
  await pipeline(src, zlib.createGzip({ level: 9 }), fs.createWriteStream(file));
  return fs.statSync(file).size;
}

/**
 * A JSON answer of the upload routes as these tests read it (docs/api.md "Uploads"): `trace` on
 * success, `error` on a refusal. Both are declared present so a test reads the one it expects; an
 * answer without it fails the test's expectation, not the type check.
 */
export interface UploadAnswer {
  trace: { id: string; samples: number; originalName: string; [field: string]: unknown };
  error: { code: string; message: string; details?: unknown };
}

export interface TusResult {
  url: string;
  status: number;
  body: UploadAnswer;
  requests: { method: string; offset: string | undefined }[];
}

/**
 * A resumable upload with tus-js-client: `data` is what goes over the wire (gzip unless the
 * metadata says otherwise). Resolves with the last answer; rejects with its error (with the
 * answer's status and body) when the server refuses.
 */
export function tusUpload(
  base: string,
  cookie: string,
  data: Buffer,
  metadata: Record<string, string>,
  opts: {
    chunkSize?: number;
    retryDelays?: number[];
    onProgress?: (sent: number) => void;
    onUrl?: (url: string) => void;
  } = {},
): Promise<TusResult> {
  const requests: TusResult["requests"] = [];
  return new Promise((resolve, reject) => {
    const up = new tus.Upload(data, {
      endpoint: `${base}/api/uploads`,
      metadata,
      headers: { Cookie: cookie },
      chunkSize: opts.chunkSize ?? 256 * 1024,
      retryDelays: opts.retryDelays ?? [0, 200, 500, 1000, 2000],
      storeFingerprintForResuming: false,
      onBeforeRequest: (req) => {
        requests.push({ method: req.getMethod(), offset: req.getHeader("Upload-Offset") });
      },
      onUploadUrlAvailable: () => opts.onUrl?.(up.url!),
      onProgress: (sent) => opts.onProgress?.(sent),
      onSuccess: ({ lastResponse }) => {
        const text = lastResponse.getBody();
        resolve({ url: up.url!, status: lastResponse.getStatus(), body: text ? JSON.parse(text) : null, requests });
      },
      onError: (err) => {
        const res = (err as tus.DetailedError).originalResponse;
        const body = res?.getBody();
        let parsed: unknown = body;
        try {
          parsed = body ? JSON.parse(body) : null;
        } catch {
          /* plain text */
        }
        reject(Object.assign(err, { status: res?.getStatus() ?? 0, body: parsed, requests }));
      },
    });
    up.start();
  });
}

/** Raw tus request (for the protocol's corners: foreign ids, refused creations). */
export async function tusRequest(
  server: HasPort,
  method: string,
  pathName: string,
  headers: Record<string, string>,
  body?: Buffer,
) {
  const res = await fetch(`http://127.0.0.1:${server.port}${pathName}`, {
    method,
    headers: { "Tus-Resumable": "1.0.0", ...headers },
    body,
  });
  const text = await res.text();
  let json: UploadAnswer | null;
  try {
    json = text ? (JSON.parse(text) as UploadAnswer) : null;
  } catch {
    json = null;
  }
  // null when the answer has no body (HEAD, 204): a test reads `json` only from answers that carry one
  return { status: res.status, headers: res.headers, text, json: json as UploadAnswer };
}

/** Upload-Metadata header value (tus: comma-separated `key base64(value)` pairs). */
export function encodeMetadata(m: Record<string, string>): string {
  return Object.entries(m)
    .map(([k, v]) => `${k} ${Buffer.from(v, "utf8").toString("base64")}`)
    .join(",");
}
