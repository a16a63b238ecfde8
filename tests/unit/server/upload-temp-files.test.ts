import { afterEach, beforeEach, describe, expect, it, vi } from "vitest";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { Readable } from "node:stream";
import type { Request } from "express";
import { HashingDiskStorage, imageSniffer } from "../../../server/uploads/multer";
import { ingestCapture, type IngestJob } from "../../../server/uploads/ingest";
import { IMAGE_SNIFF_BYTES } from "../../../server/uploads/magic";

/**
 * A refused upload leaves nothing behind (the brief: "clear errors with nothing half-saved";
 * docs/api.md, uploads: "a refused upload is removed"), also when the disk is slow. Node opens a
 * write stream's file asynchronously, and a stream destroyed before its open finishes still opens
 * (creating the file) and then closes (Node docs, fs.WriteStream and stream.destroy: 'close' comes
 * after the underlying resource is released). Here every open under the test's folder is held back
 * 100 ms, as a busy thread pool holds it back, so a removal made before the close would miss.
 */

const OPEN_DELAY_MS = 100;
let dir: string;
let pendingOpens: Promise<void>[] = [];

beforeEach(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-temp-"));
  pendingOpens = [];
  const realOpen = fs.open;
  vi.spyOn(fs, "open").mockImplementation(((...args: unknown[]) => {
    const cb = args[args.length - 1] as (...r: unknown[]) => void;
    if (typeof args[0] !== "string" || !args[0].startsWith(dir))
      return (realOpen as (...a: unknown[]) => void)(...args);
    let done!: () => void;
    pendingOpens.push(new Promise<void>((r) => (done = r)));
    setTimeout(
      () =>
        (realOpen as (...a: unknown[]) => void)(...args.slice(0, -1), (...r: unknown[]) => {
          cb(...r);
          done();
        }),
      OPEN_DELAY_MS,
    );
  }) as typeof fs.open);
});

afterEach(() => {
  vi.restoreAllMocks();
  fs.rmSync(dir, { recursive: true, force: true });
});

/** Every file below `root`, after the held-back opens (and what follows them) have run. */
async function filesLeft(root: string): Promise<string[]> {
  await Promise.all(pendingOpens);
  await new Promise((r) => setTimeout(r, 50));
  return fs
    .readdirSync(root, { recursive: true, withFileTypes: true })
    .filter((e) => e.isFile())
    .map((e) => e.name);
}

describe("a refused upload leaves no temp file, even when the open is slow", () => {
  it("a photo whose first bytes are CSV text: 415, and the multipart temp file is gone", async () => {
    const storage = new HashingDiskStorage(dir, IMAGE_SNIFF_BYTES, imageSniffer);
    const body = Buffer.from("time,volts\n" + "0.0001,1.5\n".repeat(400));
    const file = { fieldname: "file", stream: Readable.from([body]) } as unknown as Express.Multer.File;
    const err = await new Promise<unknown>((resolve) =>
      storage._handleFile({ headers: {} } as Request, file, (e) => resolve(e)),
    );
    expect(err).toMatchObject({ status: 415, code: "unsupported_type" });
    expect(pendingOpens.length).toBe(1); // the temp file's open was indeed held back
    expect(await filesLeft(dir)).toEqual([]);
  });

  it("a trace body that is not text: refused 415, and the compressed copy being made is gone", async () => {
    const source = path.join(os.tmpdir(), `burnline-src-${process.pid}-${Date.now()}.bin`);
    // bytes 0..255 repeated: binary (NUL bytes), which no CSV or TSV export contains
    fs.writeFileSync(source, Buffer.from(Array.from({ length: 64 * 1024 }, (_, i) => i % 256)));
    try {
      const tempDir = path.join(dir, "tmp");
      const tracesDir = path.join(dir, "traces");
      fs.mkdirSync(tempDir, { recursive: true });
      const job: IngestJob = {
        source,
        encoding: "identity",
        tempDir,
        tracesDir,
        traceId: "t1",
        settings: {
          kind: "secondary-ignition",
          voltsPerDiv: 5,
          timePerDivS: 0.001,
        } as unknown as IngestJob["settings"],
        maxBytes: 10 * 1024 * 1024,
        skipAnalysis: true,
      };
      const out = await ingestCapture(job);
      expect(out).toMatchObject({ ok: false, refusal: { status: 415 } });
      expect(pendingOpens.length).toBeGreaterThanOrEqual(1); // the copy's open was held back
      expect(await filesLeft(dir)).toEqual([]);
    } finally {
      fs.rmSync(source, { force: true });
    }
  });
});
