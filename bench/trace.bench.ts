/**
 * Trace engine figures:
 * - parse + store of a generated 1,000,000-row, 2-channel CSV file, as a ratio to a plain
 *   hand-written split/Number() loop over the same file timed in the same run (goal ≥ 0.5);
 * - peak memory of that streamed parse as a multiple of the file's size (goal < 4);
 * - event-loop delay while two such files are parsed at once (goal < 50 ms);
 * - window query on a stored 10,000,000-sample, 2-channel trace at 2,000 px: median over 30
 *   random windows (goal < 50 ms), with the in-memory full scan of the same windows as baseline.
 * Temp files go under os.tmpdir() and are deleted.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import v8 from "node:v8";
import { execFileSync } from "node:child_process";
import { fileURLToPath, pathToFileURL } from "node:url";
import vm from "node:vm";
import { median, type BenchResult } from "./types";
import { parseTraceFile } from "../server/traces/parse-file";
import { openTraceData, writeTraceData } from "../server/traces/store";
import { decimateMinMax } from "../shared/trace/decimate";
import type { ParsedTrace } from "../shared/trace/types";
import { createRng } from "../tests/helpers/prng";

const ROWS = 1_000_000;
const WINDOW_SAMPLES = 10_000_000;
const WIDTH = 2000;

function gcNow(): void {
  v8.setFlagsFromString("--expose-gc");
  const gc = vm.runInNewContext("gc") as () => void;
  gc();
}

/** A CSV like a scope export: time in seconds, two channels in volts. */
function writeCsv(file: string, rows: number, seed: number): void {
  const rng = createRng(seed);
  const fd = fs.openSync(file, "w");
  try {
    fs.writeSync(fd, "Time (s),Channel A (V),Channel B (V)\n");
    let lines: string[] = [];
    for (let i = 0; i < rows; i++) {
      const a = 12 * Math.sin(i / 700) + rng.normal() * 0.2;
      const b = 0.5 * Math.cos(i / 300) + rng.normal() * 0.01;
      lines.push(`${(i * 1e-6).toExponential(6)},${a.toFixed(4)},${b.toFixed(5)}`);
      if (lines.length === 20000) {
        fs.writeSync(fd, lines.join("\n") + "\n");
        lines = [];
      }
    }
    if (lines.length) fs.writeSync(fd, lines.join("\n") + "\n");
  } finally {
    fs.closeSync(fd);
  }
}

/** The baseline: what anyone would write first. */
function naiveParse(file: string): number {
  const text = fs.readFileSync(file, "utf8");
  const lines = text.split("\n");
  const t: number[] = [];
  const a: number[] = [];
  const b: number[] = [];
  for (let i = 1; i < lines.length; i++) {
    const parts = lines[i].split(",");
    if (parts.length < 3) continue;
    t.push(Number(parts[0]));
    a.push(Number(parts[1]));
    b.push(Number(parts[2]));
  }
  return t.length + a.length + b.length;
}

async function oursParseAndStore(file: string, dir: string, id: string): Promise<number> {
  const trace = await parseTraceFile(file);
  const { bytes } = await writeTraceData(dir, id, trace);
  return bytes;
}

/** Runs a streamed parse in a child process and reads its peak RSS. */
function peakParseMemory(csv: string, dir: string): { baseBytes: number; deltaBytes: number } {
  const script = path.join(dir, "memory-child.mts");
  const parseFile = pathToFileURL(
    path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../server/traces/parse-file.ts"),
  ).href;
  fs.writeFileSync(
    script,
    [
      `import { parseTraceFile } from ${JSON.stringify(parseFile)};`,
      `const base = process.memoryUsage().rss;`,
      `const t = await parseTraceFile(${JSON.stringify(csv)});`,
      `const peak = process.resourceUsage().maxRSS * 1024;`,
      `console.log(JSON.stringify({ base, peak, samples: t.samples }));`,
    ].join("\n"),
  );
  const out = execFileSync(process.execPath, ["--import", "tsx", script], { encoding: "utf8" });
  const r = JSON.parse(out.trim().split("\n").pop()!) as { base: number; peak: number; samples: number };
  if (r.samples !== ROWS) throw new Error(`child parsed ${r.samples} rows`);
  return { baseBytes: r.base, deltaBytes: Math.max(0, r.peak - r.base) };
}

async function largestGap(work: () => Promise<unknown>): Promise<number> {
  let last = performance.now();
  let maxGap = 0;
  const ticker = setInterval(() => {
    const now = performance.now();
    maxGap = Math.max(maxGap, now - last);
    last = now;
  }, 1);
  try {
    await work();
  } finally {
    clearInterval(ticker);
  }
  return maxGap;
}

async function timeIt(fn: () => unknown): Promise<number> {
  const t = performance.now();
  await fn();
  return performance.now() - t;
}

function syntheticTrace(n: number, seed: number): ParsedTrace {
  const rng = createRng(seed);
  const a = new Float32Array(n);
  const b = new Float32Array(n);
  for (let i = 0; i < n; i++) {
    a[i] = 10 * Math.sin(i / 20000) + (i % 50000 === 0 ? 30 : 0) + rng.next() * 0.5;
    b[i] = Math.cos(i / 3000) + rng.next() * 0.05;
  }
  const mm = (v: Float32Array) => {
    let lo = Infinity;
    let hi = -Infinity;
    for (const x of v) {
      if (x < lo) lo = x;
      if (x > hi) hi = x;
    }
    return { min: lo, max: hi };
  };
  const rate = 1e6;
  return {
    samples: n,
    sampleRateHz: rate,
    t0: 0,
    durationS: n / rate,
    time: null,
    channels: [
      { name: "A", unit: "V", values: a, ...mm(a) },
      { name: "B", unit: "V", values: b, ...mm(b) },
    ],
    warnings: [],
  };
}

export default async function bench(): Promise<BenchResult[]> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-trace-bench-"));
  const results: BenchResult[] = [];
  try {
    const csv = path.join(dir, "capture.csv");
    writeCsv(csv, ROWS, 42);
    const size = fs.statSync(csv).size;

    // memory: in a fresh process, peak RSS during the parse above the RSS just before it
    const mem = peakParseMemory(csv, dir);
    const memRatio = mem.deltaBytes / size;
    results.push({
      name: `streamed parse peak memory, ${(size / 1e6).toFixed(1)} MB file (fresh process, RSS ${(mem.baseBytes / 1e6).toFixed(0)} MB before)`,
      value: memRatio,
      unit: "× file size above the RSS before",
      goal: "< 4",
      pass: memRatio < 4,
    });

    // speed: alternate the two, median of 3 each
    const ours: number[] = [];
    const naive: number[] = [];
    for (let r = 0; r < 3; r++) {
      gcNow();
      naive.push(await timeIt(() => naiveParse(csv)));
      gcNow();
      ours.push(await timeIt(() => oursParseAndStore(csv, dir, `run${r}`)));
    }
    const oursMs = median(ours);
    const naiveMs = median(naive);
    results.push({
      name: `parse + store ${ROWS.toLocaleString("en")} rows × 2 channels`,
      value: oursMs,
      unit: "ms",
      baseline: `split/Number() loop ${naiveMs.toFixed(0)} ms`,
      ratio: naiveMs / oursMs,
      goal: "ratio ≥ 0.5 (at least half as fast as the naive loop)",
      pass: naiveMs / oursMs >= 0.5,
    });

    // responsiveness: largest gap between 1 ms timer ticks, idle (the machine's own noise) and
    // during two parses at once
    const idleGap = await largestGap(() => new Promise((r) => setTimeout(r, 500)));
    const busyGap = await largestGap(() => Promise.all([parseTraceFile(csv), parseTraceFile(csv)]));
    results.push({
      name: "event-loop delay during two parses at once",
      value: busyGap,
      unit: "ms (largest gap between 1 ms ticks)",
      baseline: `idle ${idleGap.toFixed(1)} ms`,
      ratio: busyGap / Math.max(idleGap, 1),
      goal: "< 50 ms",
      pass: busyGap < 50,
    });

    // window queries on a 10 M-sample trace
    gcNow();
    const big = syntheticTrace(WINDOW_SAMPLES, 7);
    const { path: dataPath } = await writeTraceData(dir, "big", big);
    const openMs = await timeIt(async () => {
      const d = await openTraceData(dataPath);
      await d.window(big.t0, big.t0 + big.durationS, WIDTH);
    });
    const data = await openTraceData(dataPath);
    const rng = createRng(99);
    const windows: [number, number][] = [[0, big.durationS]];
    while (windows.length < 30) {
      const span = big.durationS * Math.pow(10, rng.range(-3, 0));
      const start = rng.range(-0.05 * big.durationS, big.durationS - 0.5 * span);
      windows.push([start, start + span]);
    }
    const stored: number[] = [];
    const scan: number[] = [];
    for (const [t0, t1] of windows) {
      stored.push(await timeIt(() => data.window(t0, t1, WIDTH)));
      scan.push(await timeIt(() => decimateMinMax(big, t0, t1, WIDTH)));
    }
    const storedMs = median(stored);
    const scanMs = median(scan);
    results.push({
      name: `window ${WINDOW_SAMPLES.toLocaleString("en")} samples × 2 channels at ${WIDTH} px, median of ${windows.length}`,
      value: storedMs,
      unit: "ms",
      baseline: `in-memory full scan ${scanMs.toFixed(1)} ms`,
      ratio: scanMs / storedMs,
      goal: "median < 50 ms",
      pass: storedMs < 50,
    });
    results.push({
      name: "open stored trace + first full-length window",
      value: openMs,
      unit: "ms",
      goal: "< 50 ms",
      pass: openMs < 50,
    });
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
  return results;
}
