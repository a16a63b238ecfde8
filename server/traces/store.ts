/**
 * Parsed channels stored once in a compact binary file per trace, so no view re-parses CSV.
 *
 * File layout (all numbers little-endian):
 *
 *   bytes 0–7   magic "BLTRACE1" (ASCII)
 *   bytes 8–11  uint32 H: byte length of the JSON header that follows
 *   bytes 12…   JSON header (UTF-8, TraceDataHeader), padded with spaces so that the data area
 *               starts at a multiple of 8: data area start D = 12 + H
 *   D + …       sections at the offsets (relative to D, each a multiple of 8) given in the header:
 *     values    Float32, in blocks of 64 samples, channels interleaved by block:
 *               [ch0 s0…63][ch1 s0…63]…[chC−1 s0…63][ch0 s64…127]…; the last block holds the
 *               remaining r = samples − 64·⌊samples/64⌋ samples of each channel, channel after
 *               channel. Sample i of channel c is at
 *               values.offset + 4·(64·C·⌊i/64⌋ + c·len + i mod 64), len = min(64, samples − 64·⌊i/64⌋)
 *     pyramid   per channel and level (blocks of 64, 4096, 262144, … samples): Float32 × blocks of
 *               block minima, then Float32 × blocks of block maxima (shared/trace/pyramid)
 *     time      only when time is uneven: Float64 × samples (seconds), and the time index,
 *               Float64 × ⌈samples/64⌉ = the time of every 64th sample
 *
 * The header carries samples, sampleRateHz, t0, durationS, whether time is uniform, each channel's
 * name/unit/min/max and pyramid offsets, and the parser's warnings.
 *
 * A window query reads the header-held pyramid from memory and, from disk, only the 64-sample
 * blocks at the bucket boundaries (one positional read per boundary for all channels), or one
 * contiguous read when the window holds few samples. Those reads are synchronous (a few ms in
 * total for 2,000 buckets): thousands of tiny async reads through the thread pool cost ten times more.
 */
import fs from "node:fs";
import fsp from "node:fs/promises";
import path from "node:path";
import { randomBytes } from "node:crypto";
import {
  channelMeta,
  type ParsedTrace,
  type TraceChannel,
  type TraceChannelMeta,
  type TraceWindow,
} from "../../shared/trace/types";
import { buildPyramid, BlockScanner, PYRAMID_BASE_BLOCK, type MinMaxLevel } from "../../shared/trace/pyramid";
import { assembleWindow, bucketBoundaries, bucketOf, checkWindow } from "../../shared/trace/decimate";

export const TRACE_DATA_MAGIC = "BLTRACE1";
export const TRACE_DATA_VERSION = 1;
const PREFIX = 12;
const BS = PYRAMID_BASE_BLOCK;
/** Windows whose samples (all channels) fit in this many bytes are read in one piece. */
const CONTIGUOUS_READ_BYTES = 4 * 1024 * 1024;

export interface TraceDataLevel {
  blockSize: number;
  blocks: number;
  minOffset: number;
  maxOffset: number;
}

/** A channel in the file's header: its metadata (shared/trace/types TraceChannelMeta) and pyramid. */
export interface TraceDataChannel extends TraceChannelMeta {
  levels: TraceDataLevel[];
}

export interface TraceDataHeader {
  format: "burnline-trace";
  version: number;
  samples: number;
  sampleRateHz: number;
  t0: number;
  durationS: number;
  uniform: boolean;
  /** the values section: Float32 blocks of `blockSize` samples, channels interleaved by block */
  values: { offset: number; blockSize: number };
  /** uneven time: offsets of the Float64 time array and of the time index (every 64th sample) */
  time: { offset: number; indexOffset: number; indexLength: number } | null;
  channels: TraceDataChannel[];
  warnings: string[];
}

export interface TraceData {
  readonly path: string;
  readonly header: TraceDataHeader;
  /** Min/max-decimated points over [t0, t1) into `width` buckets; equals decimateMinMax on the arrays. */
  window(t0: number, t1: number, width: number): Promise<TraceWindow>;
  /** The full arrays (for analysis). */
  readChannels(): Promise<ParsedTrace>;
}

const ID_PATTERN = /^[A-Za-z0-9][A-Za-z0-9_-]{0,127}$/;

function assertLittleEndian() {
  if (new Uint8Array(new Uint16Array([1]).buffer)[0] !== 1)
    throw new Error("trace data files need a little-endian host");
}

const align8 = (x: number) => (x + 7) & ~7;

function bytesOf(a: Float32Array | Float64Array): Uint8Array {
  return new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
}

/** The path writeTraceData uses for a trace id (letters, digits, '-' and '_' only). */
export function traceDataPath(dir: string, id: string): string {
  if (!ID_PATTERN.test(id)) throw new RangeError("trace id must be 1–128 letters, digits, '-' or '_'");
  return path.join(dir, `${id}.trace`);
}

type Section = Uint8Array | ((write: (bytes: Uint8Array) => Promise<void>) => Promise<void>);

/**
 * Writes the parsed trace to `<dir>/<id>.trace`, with its min/max pyramid. Atomic: written to a
 * temp file beside it and renamed into place; on failure nothing is left behind.
 */
export async function writeTraceData(
  dir: string,
  id: string,
  trace: ParsedTrace,
): Promise<{ path: string; bytes: number }> {
  assertLittleEndian();
  const finalPath = traceDataPath(dir, id);
  const n = trace.samples;
  const C = trace.channels.length;
  if (C === 0) throw new RangeError("a trace needs at least one channel");
  const chans = trace.channels.map((c) => {
    if (c.values.length < n) throw new RangeError(`channel ${c.name} has fewer than ${n} values`);
    return c.values.length === n ? c.values : c.values.subarray(0, n);
  });

  if (trace.time && trace.time.length < n) throw new RangeError(`the time array has fewer than ${n} values`);
  if (!(n >= 1)) throw new RangeError("a trace needs at least one sample");
  const sections: { at: number; length: number; data: Section }[] = [];
  let cursor = 0;
  const place = (length: number, data: Section): number => {
    cursor = align8(cursor);
    const at = cursor;
    sections.push({ at, length, data });
    cursor += length;
    return at;
  };
  const add = (a: Float32Array | Float64Array) => place(a.byteLength, bytesOf(a));

  // values, interleaved by 64-sample block, produced in pieces while writing
  const valuesOffset = place(n * C * 4, async (write) => {
    const blocksPerPiece = 4096;
    const piece = new Float32Array(blocksPerPiece * BS * C);
    for (let j0 = 0; j0 * BS < n; j0 += blocksPerPiece) {
      let k = 0;
      for (let j = j0; j < j0 + blocksPerPiece && j * BS < n; j++) {
        const s = j * BS;
        const e = Math.min(n, s + BS);
        for (let c = 0; c < C; c++) {
          piece.set(chans[c].subarray(s, e), k);
          k += e - s;
        }
      }
      await write(new Uint8Array(piece.buffer, 0, k * 4));
    }
  });
  const channels: TraceDataChannel[] = trace.channels.map((c, ci) => {
    const levels = buildPyramid(chans[ci], n).map((l) => ({
      blockSize: l.blockSize,
      blocks: l.min.length,
      minOffset: add(l.min),
      maxOffset: add(l.max),
    }));
    return { ...channelMeta(c), levels };
  });
  let time: TraceDataHeader["time"] = null;
  if (trace.time) {
    const t = trace.time.length === n ? trace.time : trace.time.subarray(0, n);
    const offset = add(t);
    const index = new Float64Array(Math.ceil(n / BS));
    for (let j = 0; j < index.length; j++) index[j] = t[j * BS];
    time = { offset, indexOffset: add(index), indexLength: index.length };
  }
  const header: TraceDataHeader = {
    format: "burnline-trace",
    version: TRACE_DATA_VERSION,
    samples: n,
    sampleRateHz: trace.sampleRateHz,
    t0: trace.t0,
    durationS: trace.durationS,
    uniform: trace.time == null,
    values: { offset: valuesOffset, blockSize: BS },
    time,
    channels,
    warnings: trace.warnings,
  };
  let json = Buffer.from(JSON.stringify(header), "utf8");
  const padded = align8(PREFIX + json.length) - PREFIX;
  if (padded > json.length) json = Buffer.concat([json, Buffer.alloc(padded - json.length, 0x20)]);
  const prefix = Buffer.alloc(PREFIX);
  prefix.write(TRACE_DATA_MAGIC, 0, "ascii");
  prefix.writeUInt32LE(json.length, 8);

  await fsp.mkdir(dir, { recursive: true });
  const tmp = `${finalPath}.${randomBytes(6).toString("hex")}.tmp`;
  const fh = await fsp.open(tmp, "wx");
  let ok = false;
  try {
    let written = 0;
    const write = async (bytes: Uint8Array) => {
      let done = 0;
      while (done < bytes.length) {
        const { bytesWritten } = await fh.write(bytes, done, Math.min(bytes.length - done, 1 << 24));
        done += bytesWritten;
      }
      written += bytes.length;
    };
    await write(prefix);
    await write(json);
    const D = written;
    for (const s of sections) {
      if (D + s.at > written) await write(new Uint8Array(D + s.at - written));
      const before = written;
      if (typeof s.data === "function") await s.data(write);
      else await write(s.data);
      if (written - before !== s.length) throw new Error("trace data section size mismatch");
    }
    await fh.close();
    await fsp.rename(tmp, finalPath);
    ok = true;
    return { path: finalPath, bytes: written };
  } finally {
    if (!ok) {
      await fh.close().catch(() => {});
      await fsp.rm(tmp, { force: true }).catch(() => {});
    }
  }
}

function readExactSync(fd: number, target: Uint8Array, position: number): void {
  let done = 0;
  while (done < target.length) {
    const got = fs.readSync(fd, target, done, target.length - done, position + done);
    if (got === 0) throw new Error("trace data file is truncated");
    done += got;
  }
}

async function readExact(fh: fsp.FileHandle, target: Uint8Array, position: number): Promise<void> {
  let done = 0;
  while (done < target.length) {
    const { bytesRead } = await fh.read(target, done, target.length - done, position + done);
    if (bytesRead === 0) throw new Error("trace data file is truncated");
    done += bytesRead;
  }
}

async function readF32(fh: fsp.FileHandle, position: number, count: number): Promise<Float32Array> {
  const a = new Float32Array(count);
  await readExact(fh, new Uint8Array(a.buffer), position);
  return a;
}

async function readF64(fh: fsp.FileHandle, position: number, count: number): Promise<Float64Array> {
  const a = new Float64Array(count);
  await readExact(fh, new Uint8Array(a.buffer), position);
  return a;
}

async function readHeader(fh: fsp.FileHandle): Promise<{ header: TraceDataHeader; dataStart: number }> {
  const prefix = new Uint8Array(PREFIX);
  const { bytesRead } = await fh.read(prefix, 0, PREFIX, 0);
  const buf = Buffer.from(prefix.buffer);
  if (bytesRead < PREFIX || buf.toString("ascii", 0, 8) !== TRACE_DATA_MAGIC) throw new Error("not a trace data file");
  const h = buf.readUInt32LE(8);
  const json = new Uint8Array(h);
  await readExact(fh, json, PREFIX);
  const header = JSON.parse(Buffer.from(json.buffer).toString("utf8")) as TraceDataHeader;
  if (header.format !== "burnline-trace" || header.version !== TRACE_DATA_VERSION) {
    throw new Error(`unsupported trace data version ${header.version}`);
  }
  return { header, dataStart: PREFIX + h };
}

/** Blocks [j0, j1) of the interleaved values, read in one piece. */
interface ValueRun {
  j0: number;
  j1: number;
  buf: ArrayBuffer;
}

function valueBlockView(run: ValueRun, j: number, c: number, C: number, n: number): Float32Array {
  const len = Math.min(BS, n - j * BS);
  const start = (j - run.j0) * BS * C + c * len;
  return new Float32Array(run.buf, start * 4, len);
}

/** Reads the sorted block runs [j0, j1) of the interleaved values section. */
function readValueRuns(fd: number, valuesAt: number, C: number, n: number, runs: [number, number][]): ValueRun[] {
  return runs.map(([j0, j1]) => {
    const s = j0 * BS;
    const e = Math.min(n, j1 * BS);
    const buf = new ArrayBuffer((e - s) * C * 4);
    readExactSync(fd, new Uint8Array(buf), valuesAt + s * C * 4);
    return { j0, j1, buf };
  });
}

/** Groups sorted unique block indexes into runs of consecutive blocks, dropping blocks past the end. */
function toRuns(blocks: Iterable<number>, nBlocks: number): [number, number][] {
  const runs: [number, number][] = [];
  for (const j of blocks) {
    if (j >= nBlocks) continue;
    const last = runs[runs.length - 1];
    if (last && last[1] === j) last[1] = j + 1;
    else if (!last || last[1] < j) runs.push([j, j + 1]);
  }
  return runs;
}

/**
 * Opens a trace data file: reads the header, the min/max pyramid and (uneven time) the time index
 * into memory — about 1/8 of the values' size with the first level of 64-sample blocks. Windows
 * then read only the samples they need.
 */
export async function openTraceData(file: string): Promise<TraceData> {
  assertLittleEndian();
  const fh = await fsp.open(file, "r");
  let header: TraceDataHeader;
  let dataStart: number;
  let pyramids: MinMaxLevel[][];
  let timeIndex: Float64Array | null = null;
  try {
    ({ header, dataStart } = await readHeader(fh));
    const D = dataStart;
    // the pyramid sections lie one after the other: read them in one piece
    const all = header.channels.flatMap((c) => c.levels.flatMap((l) => [l.minOffset, l.maxOffset + l.blocks * 4]));
    const from = all.length ? Math.min(...all) : 0;
    const to = all.length ? Math.max(...all) : 0;
    const region = new ArrayBuffer(to - from);
    await readExact(fh, new Uint8Array(region), D + from);
    pyramids = header.channels.map((c) =>
      c.levels.map((l) => ({
        blockSize: l.blockSize,
        min: new Float32Array(region, l.minOffset - from, l.blocks),
        max: new Float32Array(region, l.maxOffset - from, l.blocks),
      })),
    );
    if (header.time) timeIndex = await readF64(fh, D + header.time.indexOffset, header.time.indexLength);
  } finally {
    await fh.close();
  }
  const hdr = header;
  const n = hdr.samples;
  const C = hdr.channels.length;
  const nBlocks = Math.ceil(n / BS);
  const D = dataStart;
  const pyr = pyramids;

  function boundaries(fd: number, t0: number, t1: number, width: number): Int32Array {
    if (!hdr.time || !timeIndex) {
      const tr0 = hdr.t0;
      const rate = hdr.sampleRateHz;
      // same arithmetic as sampleTime()
      return bucketBoundaries(n, (i) => tr0 + i / rate, t0, t1, width);
    }
    // coarse search on the time index (time of sample 64j); boundary k then lies in block j − 1
    // (its first element excluded) or is 64j itself
    const idx = timeIndex;
    const coarse = bucketBoundaries(idx.length, (j) => idx[j], t0, t1, width);
    const need = new Set<number>();
    for (let k = 0; k <= width; k++) if (coarse[k] > 0) need.add(coarse[k] - 1);
    const blocks = new Map<number, Float64Array>();
    const timeAt = D + hdr.time.offset;
    for (const [j0, j1] of toRuns(
      [...need].sort((a, b) => a - b),
      nBlocks,
    )) {
      const s = j0 * BS;
      const e = Math.min(n, j1 * BS);
      const buf = new ArrayBuffer((e - s) * 8);
      readExactSync(fd, new Uint8Array(buf), timeAt + s * 8);
      for (let j = j0; j < j1; j++) blocks.set(j, new Float64Array(buf, (j - j0) * BS * 8, Math.min(BS, n - j * BS)));
    }
    const b = new Int32Array(width + 1);
    for (let k = 0; k <= width; k++) {
      const j = coarse[k];
      if (j === 0) continue; // b[k] = 0
      const block = blocks.get(j - 1)!;
      let i = 1;
      while (i < block.length && bucketOf(block[i], t0, t1, width) < k) i++;
      b[k] = (j - 1) * BS + i;
    }
    return b;
  }

  async function window(t0: number, t1: number, width: number): Promise<TraceWindow> {
    checkWindow(t0, t1, width);
    const fd = fs.openSync(file, "r");
    try {
      const bnd = boundaries(fd, t0, t1, width);
      const a = bnd[0];
      const b = bnd[width];
      let runs: [number, number][];
      if (b <= a) runs = [];
      else if ((b - a) * C * 4 <= CONTIGUOUS_READ_BYTES || b - a <= (width + 1) * BS * 2) {
        runs = [[Math.floor(a / BS), Math.floor((b - 1) / BS) + 1]];
      } else {
        const set: number[] = [];
        for (let k = 0; k <= width; k++) {
          const j = Math.floor(bnd[k] / BS);
          if (set[set.length - 1] !== j) set.push(j);
        }
        runs = toRuns(set, nBlocks);
      }
      const read = readValueRuns(fd, D + hdr.values.offset, C, n, runs);
      // block j → its run
      const runOf = (j: number): ValueRun | undefined => {
        let lo = 0;
        let hi = read.length - 1;
        while (lo <= hi) {
          const mid = (lo + hi) >> 1;
          const r = read[mid];
          if (j < r.j0) hi = mid - 1;
          else if (j >= r.j1) lo = mid + 1;
          else return r;
        }
        return undefined;
      };
      const channels = hdr.channels.map((c, ci) => ({
        name: c.name,
        raw: new BlockScanner((j) => {
          const r = runOf(j);
          return r && valueBlockView(r, j, ci, C, n);
        }),
        levels: pyr[ci],
      }));
      return assembleWindow(bnd, t0, t1, width, channels);
    } finally {
      fs.closeSync(fd);
    }
  }

  return { path: file, header, window, readChannels: () => readChannels(file) };
}

const openCache = new Map<string, Promise<TraceData>>();
const OPEN_CACHE_ENTRIES = 16;

/**
 * openTraceData with a small cache of the most recently used files (trace data files are written
 * once and never change; remove a file's entry with forgetTraceData when deleting it).
 */
export function openTraceDataCached(file: string): Promise<TraceData> {
  const key = path.resolve(file);
  let p = openCache.get(key);
  if (p) {
    openCache.delete(key);
    openCache.set(key, p);
    return p;
  }
  p = openTraceData(key);
  p.catch(() => openCache.delete(key));
  openCache.set(key, p);
  while (openCache.size > OPEN_CACHE_ENTRIES) openCache.delete(openCache.keys().next().value!);
  return p;
}

/** Drops a file from the open cache (call when deleting its trace). */
export function forgetTraceData(file: string): void {
  openCache.delete(path.resolve(file));
}

/**
 * The channel metadata kept with a trace (the API's and the database's `channels`): name, unit as
 * normalised by the parser, extremes, and where the unit came from (shared/trace/types channelMeta).
 */
export function storedChannels(trace: Pick<ParsedTrace, "channels">): TraceChannelMeta[] {
  return trace.channels.map(channelMeta);
}

/** Reads the full arrays of a trace data file back as a ParsedTrace. */
export async function readChannels(file: string): Promise<ParsedTrace> {
  assertLittleEndian();
  const fh = await fsp.open(file, "r");
  try {
    const { header, dataStart } = await readHeader(fh);
    const n = header.samples;
    const C = header.channels.length;
    const out = header.channels.map(() => new Float32Array(n));
    const piece = 4096; // blocks per read
    for (let j0 = 0; j0 * BS < n; j0 += piece) {
      const s = j0 * BS;
      const e = Math.min(n, (j0 + piece) * BS);
      const buf = await readF32(fh, dataStart + header.values.offset + s * C * 4, (e - s) * C);
      let k = 0;
      for (let j = j0; j * BS < e; j++) {
        const bs = j * BS;
        const len = Math.min(BS, n - bs);
        for (let c = 0; c < C; c++) {
          out[c].set(buf.subarray(k, k + len), bs);
          k += len;
        }
      }
    }
    const channels: TraceChannel[] = header.channels.map(({ levels: _levels, ...meta }, ci) => ({
      ...meta,
      values: out[ci],
    }));
    const time = header.time ? await readF64(fh, dataStart + header.time.offset, n) : null;
    return {
      samples: n,
      sampleRateHz: header.sampleRateHz,
      t0: header.t0,
      durationS: header.durationS,
      time,
      channels,
      warnings: header.warnings,
    };
  } finally {
    await fh.close();
  }
}
