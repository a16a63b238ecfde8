/**
 * Upload figures (issue 14), each against a baseline measured in the same run:
 * - choose-to-visible for a 50 MB capture over a 20 Mbit/s uplink: the browser's way (gzip with
 *   the platform's CompressionStream while tus-js-client sends the compressed bytes through a
 *   rate-limited loopback link to a real server, until the server answers with the stored trace),
 *   as a ratio to the raw file's transfer time over the same link (measured on a 12.5 MB prefix of
 *   the file and scaled to its size, to keep the bench short; goal ≤ 0.4);
 * - the main event loop's p99 delay (perf_hooks.monitorEventLoopDelay, 1 ms resolution) while four
 *   50 MB captures are parsed at once by the upload pool, against the same four parses run on the
 *   main thread (goal < 20 ms);
 * - parse + store throughput in MB/s of CSV, for a gzip body (as the browser sends it) and a plain
 *   one (which also gets its gzip copy made), against a hand-written split/Number() loop over the
 *   same file (goal ≥ 1.0 ×).
 * The capture is a generated secondary-ignition recording at 1 MS/s, rendered as a scope's CSV
 * (cached under os.tmpdir()); temporary servers and folders are removed.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { monitorEventLoopDelay } from "node:perf_hooks";
import { Readable } from "node:stream";
import zlib from "node:zlib";
import { pino } from "pino";
import * as tus from "tus-js-client";
import { eq } from "drizzle-orm";
import { median, type BenchResult } from "./types";
import { startServer } from "../server/index";
import { schema } from "../server/db/client";
import { ingestCapture, type IngestJob } from "../server/uploads/ingest";
import { runIngest, WorkPool, defaultThreads } from "../server/uploads/pool";
import { CompressedSource } from "../src/features/uploads/lib/compressed-source";
import { generateSecondary, renderCsv } from "../demo/generators";
import { createShopTeam, signIn } from "../tests/factories";
import { LinkProxy } from "../tests/e2e/helpers/link-proxy";

const TARGET_BYTES = 50e6;
const UPLINK = 20e6 / 8; // 20 Mbit/s in bytes per second
const RAW_PROBE = 12.5e6;
const settings = {
  kind: "secondary-ignition",
  voltsPerDiv: 0.2,
  timePerDivS: 0.02,
} as unknown as IngestJob["settings"];

/** The ≈ 50 MB capture (2.8 s at 1 MS/s, 17 firings at 750 rpm), made once and kept in the temp folder. */
function captureFile(): string {
  const file = path.join(os.tmpdir(), "burnline-bench-capture-50mb-v2.csv");
  if (fs.existsSync(file) && fs.statSync(file).size > TARGET_BYTES * 0.9) return file;
  const g = generateSecondary({ seed: 100, sampleRateHz: 1e6, durationS: 2.8, events: 17 });
  fs.writeFileSync(`${file}.tmp`, renderCsv(g.trace, { digits: 5 }));
  fs.renameSync(`${file}.tmp`, file);
  return file;
}

/** The split/Number() loop anyone would write first. */
function naiveParse(file: string): number {
  const text = fs.readFileSync(file, "utf8");
  const lines = text.split("\n");
  const t: number[] = [];
  const a: number[] = [];
  for (let i = 1; i < lines.length; i++) {
    const parts = lines[i].split(",");
    if (parts.length < 2) continue;
    t.push(Number(parts[0]));
    a.push(Number(parts[1]));
  }
  return t.length + a.length;
}

function job(file: string, dir: string, id: string, extra: Partial<IngestJob> = {}): IngestJob {
  return {
    source: file,
    encoding: "identity",
    tempDir: dir,
    tracesDir: dir,
    traceId: id,
    settings,
    maxBytes: 1e9,
    ...extra,
  };
}

/** The compressed bytes as the tus client's Node build sends them (Buffers with a size). */
function nodeSource(src: CompressedSource) {
  return {
    get size() {
      return src.size;
    },
    async slice(start: number, end: number) {
      const { value, done } = await src.slice(start, end);
      if (!value) return { value: null, done };
      const buf = Buffer.from(await value.arrayBuffer()) as Buffer & { size: number };
      buf.size = buf.length;
      return { value: buf, done };
    },
    close() {},
  };
}

/** Sends `bytes` raw bytes through the link to a sink and times it. */
async function rawTransferSeconds(link: LinkProxy, sinkPort: number, bytes: number): Promise<number> {
  link.setTarget(sinkPort);
  const net = await import("node:net");
  const t = performance.now();
  await new Promise<void>((resolve, reject) => {
    const s = net.connect(link.port, "127.0.0.1", () => {
      const piece = Buffer.alloc(64 * 1024, 0x31);
      let left = bytes;
      const pump = () => {
        while (left > 0) {
          const n = Math.min(piece.length, left);
          left -= n;
          if (!s.write(piece.subarray(0, n))) return void s.once("drain", pump);
        }
        s.end();
      };
      pump();
    });
    s.on("error", reject);
    s.on("close", () => resolve());
  });
  return (performance.now() - t) / 1000;
}

async function chooseToVisible(file: string): Promise<BenchResult> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-bench-upload-"));
  const server = await startServer(
    {
      NODE_ENV: "test",
      PORT: "0",
      HOST: "127.0.0.1",
      DATABASE_URL: path.join(dir, "db.sqlite"),
      DATA_DIR: dir,
      MAIL_CATCHER_PORT: "0",
      FAKE_STRIPE_PORT: "0",
      LOG_LEVEL: "silent",
      DEMO: "false",
    },
    pino({ level: "silent" }),
  );
  const net = await import("node:net");
  // a sink that reads everything and answers when the client ends
  let received = 0;
  const sink = net.createServer((s) => {
    s.on("data", (d) => (received += d.length));
    s.on("end", () => s.end());
  });
  await new Promise<void>((r) => sink.listen(0, "127.0.0.1", r));
  const link = await new LinkProxy(server.port, { rateBytesPerS: UPLINK }).listen();
  try {
    const size = fs.statSync(file).size;
    const probeS = await rawTransferSeconds(link, (sink.address() as { port: number }).port, RAW_PROBE);
    const rawS = (probeS * size) / RAW_PROBE;
    if (received < RAW_PROBE) throw new Error(`the sink got ${received} bytes`);
    link.setTarget(server.port);

    const team = await createShopTeam(server);
    const tech = await signIn(server, team.technicians[0]);
    const caseId = (
      await tech
        .post("/api/cases")
        .send({ vehicle: { make: "Veltra", model: "Sorrel" }, complaint: "Misfire", system: "ignition" })
    ).body.id as string;
    // warm the pool thread as a running server would have it
    await new Promise((r) => setTimeout(r, 100));

    const t0 = performance.now();
    // the browser's way: compress as a stream, send what is compressed while compressing
    const source = new CompressedSource();
    let compressedAt = 0;
    const compressing = (async () => {
      // Node's CompressionStream: the same web API (and zlib's default level) as the browser's
      const stream = Readable.toWeb(
        fs.createReadStream(file, { highWaterMark: 256 * 1024 }),
      ) as ReadableStream<Uint8Array>;
      const reader = stream
        .pipeThrough(new CompressionStream("gzip") as never)
        .getReader() as ReadableStreamDefaultReader<Uint8Array>;
      let parts: Uint8Array[] = [];
      let n = 0;
      for (;;) {
        const { value, done } = await reader.read();
        if (done) break;
        parts.push(value);
        n += value.byteLength;
        if (n >= 256 * 1024) {
          source.add(new Blob(parts));
          parts = [];
          n = 0;
        }
      }
      if (n) source.add(new Blob(parts));
      source.finish();
      compressedAt = performance.now();
    })();
    const answer = await new Promise<{ trace: { id: string; samples: number } }>((resolve, reject) => {
      const up = new tus.Upload(Buffer.alloc(0), {
        endpoint: `${link.url}/api/uploads`,
        headers: { Cookie: tech.cookie },
        uploadLengthDeferred: true,
        chunkSize: 4 * 1024 * 1024,
        retryDelays: [0, 500],
        storeFingerprintForResuming: false,
        fileReader: { openFile: async () => nodeSource(source) as never },
        metadata: {
          caseId,
          filename: "capture.csv",
          settings: JSON.stringify(settings),
          encoding: "gzip",
          fileBytes: String(size),
        },
        onSuccess: ({ lastResponse }) => resolve(JSON.parse(lastResponse.getBody())),
        onError: reject,
      });
      up.start();
    });
    const visibleS = (performance.now() - t0) / 1000;
    const compressS = (compressedAt - t0) / 1000;
    const tailS = visibleS - compressS;
    await compressing;
    const row = await server.ctx.db.read((tx) =>
      tx.select().from(schema.trace).where(eq(schema.trace.id, answer.trace.id)).get(),
    );
    if (!row) throw new Error("the trace was not stored");
    const ratio = visibleS / rawS;
    return {
      name:
        `choose-to-visible, ${(size / 1e6).toFixed(1)} MB capture over 20 Mbit/s (sent ${(source.bytes / 1e6).toFixed(1)} MB ` +
        `gzip, ${(size / source.bytes).toFixed(1)}:1; compressing took ${compressS.toFixed(1)} s, ` +
        `visible ${tailS.toFixed(1)} s after that; ` +
        `${row.samples.toLocaleString("en")} samples stored)`,
      value: visibleS,
      unit: "s",
      baseline: `raw file over the same link ${rawS.toFixed(1)} s (measured on ${RAW_PROBE / 1e6} MB)`,
      ratio,
      goal: "ratio ≤ 0.4",
      pass: ratio <= 0.4,
    };
  } finally {
    await link.close();
    await new Promise<void>((r) => sink.close(() => r()));
    await server.close();
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

async function loopDelayP99(work: () => Promise<unknown>): Promise<number> {
  const h = monitorEventLoopDelay({ resolution: 1 });
  h.enable();
  try {
    await work();
  } finally {
    h.disable();
  }
  return h.percentile(99) / 1e6;
}

export default async function bench(): Promise<BenchResult[]> {
  const file = captureFile();
  const size = fs.statSync(file).size;
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-bench-ingest-"));
  const results: BenchResult[] = [];
  try {
    results.push(await chooseToVisible(file));

    // four captures at once: on the pool, then on the main thread
    const pool = new WorkPool(defaultThreads(), 8);
    try {
      await pool.run("ping", null); // a started thread, as on a running server
      const onPool = await loopDelayP99(() =>
        Promise.all([0, 1, 2, 3].map((i) => runIngest(pool, job(file, dir, `pool${i}`)))),
      );
      const onMain = await loopDelayP99(() =>
        Promise.all([0, 1, 2, 3].map((i) => ingestCapture(job(file, dir, `main${i}`)))),
      );
      results.push({
        name: `main event loop p99 delay while four ${(size / 1e6).toFixed(0)} MB captures are parsed at once (pool of ${pool.threads} thread${pool.threads === 1 ? "" : "s"})`,
        value: onPool,
        unit: "ms",
        baseline: `same parses on the main thread ${onMain.toFixed(1)} ms`,
        ratio: onMain / Math.max(onPool, 0.001),
        goal: "< 20 ms",
        pass: onPool < 20,
      });
    } finally {
      await pool.close();
    }

    // parse + store throughput against the naive loop, alternating, median of 2: the body as the
    // browser sends it (gzip: inflate, check, hash, parse, channel file) and as a plain multipart
    // body (check, hash, parse, channel file, and the gzip copy kept as the original)
    const gzFile = path.join(dir, "capture.csv.gz");
    fs.writeFileSync(gzFile, zlib.gzipSync(fs.readFileSync(file), { level: 6 }));
    const times = { naive: [] as number[], gzip: [] as number[], plain: [] as number[] };
    for (let r = 0; r < 2; r++) {
      let t = performance.now();
      naiveParse(file);
      times.naive.push(performance.now() - t);
      for (const [kind, source, encoding] of [
        ["gzip", gzFile, "gzip"],
        ["plain", file, "identity"],
      ] as const) {
        t = performance.now();
        const res = await ingestCapture(job(source, dir, `${kind}${r}`, { skipAnalysis: true, encoding }));
        if (!res.ok) throw new Error(res.refusal.message);
        times[kind].push(performance.now() - t);
      }
    }
    const mbs = (ms: number[]) => size / 1e6 / (median(ms) / 1000);
    const naiveMBs = mbs(times.naive);
    for (const [kind, label] of [
      ["gzip", "gzip body as the browser sends it: inflate, check, hash, parse, channel file"],
      ["plain", "plain multipart body: check, hash, parse, channel file, gzip copy of the original"],
    ] as const) {
      const v = mbs(times[kind]);
      results.push({
        name: `parse + store throughput, ${(size / 1e6).toFixed(0)} MB of CSV (${label})`,
        value: v,
        unit: "MB/s",
        baseline: `split/Number() loop ${naiveMBs.toFixed(1)} MB/s`,
        ratio: v / naiveMBs,
        goal: "ratio ≥ 1.0",
        pass: v / naiveMBs >= 1.0,
      });
    }
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
  return results;
}
