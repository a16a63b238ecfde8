/**
 * The worker-thread pool (piscina) that runs the heavy part of an upload — decompressing, checking,
 * parsing, storing the channel pyramid and measuring — so the event loop that answers requests
 * never runs it. One pool per process, shared by every server in it, sized to the machine: one
 * thread per core but one (the event loop keeps a core), at least one; UPLOAD_WORKERS overrides.
 *
 * Admission is ours, in arrival order: a job starts when a thread is free, otherwise it waits in
 * line and its caller is told its place (and told again as the line moves), so a tech sees
 * "queued, 2nd in line" instead of a stalled bar. A line longer than UPLOAD_QUEUE refuses new jobs
 * (the route answers 503 `busy` with Retry-After).
 *
 * Followers — resumable uploads read while their bytes still arrive — are not jobs in line: they
 * spend most of their time waiting for the network, so a thread interleaves several of them (and
 * its one job) at their await points; past FOLLOWERS_PER_THREAD an upload is read after it
 * arrives instead, as a job.
 */
import os from "node:os";
import { fileURLToPath } from "node:url";
import { MessageChannel, type MessagePort } from "node:worker_threads";
import { Piscina } from "piscina";
import type { FollowMessage, IngestJob, IngestProgress, IngestResult } from "./ingest";
import type { CaptureSettings } from "../../shared/schemas/capture-settings";

/** Threads that sit idle this long are stopped (the next job starts one again). */
const IDLE_MS = 5 * 60_000;
/** The longest one job may run before its thread is stopped and the job refused. */
export const JOB_TIMEOUT_MS = 10 * 60_000;
/**
 * Heap of one pool thread. Samples live in typed arrays outside the heap; this bounds what a
 * pathological file can make the parser hold in strings before the thread is stopped.
 */
const THREAD_HEAP_MB = 1024;
/** Uploads read while they arrive, per thread. */
export const FOLLOWERS_PER_THREAD = 4;

export function defaultThreads(): number {
  return Math.max(1, Math.min(8, os.availableParallelism() - 1));
}

export class PoolFullError extends Error {
  constructor(readonly waiting: number) {
    super(`the upload pool has ${waiting} jobs waiting`);
    this.name = "PoolFullError";
  }
}

export interface JobHooks {
  /** the job waits for a thread: its 1-based place in line (called again as the line moves) */
  onQueued?(position: number): void;
  /** the job has a thread */
  onStart?(): void;
  signal?: AbortSignal;
}

interface Waiter {
  start(): void;
  fail(err: Error): void;
  hooks: JobHooks;
}

export interface PoolStats {
  threads: number;
  running: number;
  waiting: number;
  maxWaiting: number;
  following: number;
}

export class WorkPool {
  private readonly piscina: Piscina;
  private running = 0;
  private following = 0;
  private readonly line: Waiter[] = [];

  constructor(
    readonly threads: number,
    readonly maxWaiting: number,
  ) {
    this.piscina = new Piscina({
      filename: fileURLToPath(new URL("./pool-entry.mjs", import.meta.url)),
      minThreads: 0,
      maxThreads: threads,
      idleTimeout: IDLE_MS,
      // one job and its thread's followers (admission keeps jobs to one per thread)
      concurrentTasksPerWorker: 1 + FOLLOWERS_PER_THREAD,
      resourceLimits: { maxOldGenerationSizeMb: THREAD_HEAP_MB },
    });
    // a thread that dies (out of memory, a crash) rejects its task; the pool starts another
    this.piscina.on("error", () => {});
  }

  stats(): PoolStats {
    return {
      threads: this.threads,
      running: this.running,
      waiting: this.line.length,
      maxWaiting: this.maxWaiting,
      following: this.following,
    };
  }

  /** Whether another upload may be read while it arrives. */
  canFollow(): boolean {
    return this.following < this.threads * FOLLOWERS_PER_THREAD;
  }

  /** Runs a follower (no line, no time limit: it ends when told, or is told to stop). */
  async follow<R>(job: unknown, transferList: MessagePort[]): Promise<R> {
    this.following++;
    try {
      return (await this.piscina.run(job, { name: "follow", transferList })) as R;
    } finally {
      this.following--;
    }
  }

  /** Runs task `name` with `job` when a thread is free (in arrival order). */
  async run<R>(name: string, job: unknown, hooks: JobHooks = {}, transferList: MessagePort[] = []): Promise<R> {
    await this.admit(hooks);
    try {
      const signal = hooks.signal
        ? AbortSignal.any([hooks.signal, AbortSignal.timeout(JOB_TIMEOUT_MS)])
        : AbortSignal.timeout(JOB_TIMEOUT_MS);
      return (await this.piscina.run(job, { name, transferList, signal })) as R;
    } finally {
      this.release();
    }
  }

  private admit(hooks: JobHooks): Promise<void> {
    if (this.running < this.threads && this.line.length === 0) {
      this.running++;
      hooks.onStart?.();
      return Promise.resolve();
    }
    if (this.line.length >= this.maxWaiting) return Promise.reject(new PoolFullError(this.line.length));
    return new Promise<void>((resolve, reject) => {
      const w: Waiter = {
        hooks,
        start: () => {
          this.running++;
          hooks.onStart?.();
          resolve();
        },
        fail: reject,
      };
      this.line.push(w);
      hooks.onQueued?.(this.line.length);
      hooks.signal?.addEventListener(
        "abort",
        () => {
          const i = this.line.indexOf(w);
          if (i < 0) return;
          this.line.splice(i, 1);
          this.announcePlaces(i);
          reject(hooks.signal!.reason instanceof Error ? hooks.signal!.reason : new Error("aborted"));
        },
        { once: true },
      );
    });
  }

  private release(): void {
    this.running--;
    const next = this.line.shift();
    if (next) {
      next.start();
      this.announcePlaces(0);
    }
  }

  private announcePlaces(from: number): void {
    for (let i = from; i < this.line.length; i++) this.line[i].hooks.onQueued?.(i + 1);
  }

  async close(): Promise<void> {
    for (const w of this.line.splice(0)) w.fail(new Error("the server is stopping"));
    await this.piscina.destroy();
  }
}

let shared: WorkPool | null = null;

/** The process's pool, made on first use with the first caller's sizes. */
export function uploadPool(opts: { threads?: number; maxWaiting?: number } = {}): WorkPool {
  if (!shared)
    shared = new WorkPool(opts.threads && opts.threads > 0 ? opts.threads : defaultThreads(), opts.maxWaiting ?? 32);
  return shared;
}

/** Stops the pool's threads (the last server of the process closing, tests). */
export async function stopUploadPool(): Promise<void> {
  const p = shared;
  shared = null;
  await p?.close();
}

/** Runs the ingest pass of a capture on the pool, reporting its stages through `onProgress`. */
export async function runIngest(
  pool: WorkPool,
  job: Omit<IngestJob, "progress">,
  hooks: JobHooks & { onProgress?(p: IngestProgress): void } = {},
): Promise<IngestResult> {
  const { port1, port2 } = new MessageChannel();
  port1.on("message", (m: IngestProgress) => hooks.onProgress?.(m));
  port1.unref();
  try {
    return await pool.run<IngestResult>("ingest", { ...job, progress: port2 }, hooks, [port2]);
  } finally {
    port1.close();
  }
}

/** Measures a stored trace on the pool. */
export function runAnalysis(
  pool: WorkPool,
  dataFile: string,
  settings: Partial<CaptureSettings>,
): Promise<Record<string, unknown>> {
  return pool.run("analyze", { dataFile, settings });
}

/** A resumable upload read by a pool thread while it arrives. */
export interface Follower {
  /** the file has at least `bytes` bytes */
  grow(bytes: number): void;
  /** all `bytes` bytes are in: the result follows */
  end(bytes: number): Promise<IngestResult>;
  /** stop (the upload was abandoned or removed); the result rejects */
  abort(): void;
  /** settles when the follower does (a refusal can come before the end) */
  readonly result: Promise<IngestResult>;
}

export function startFollower(
  pool: WorkPool,
  job: Omit<IngestJob, "progress">,
  onProgress?: (p: IngestProgress) => void,
): Follower {
  const control = new MessageChannel();
  const progress = new MessageChannel();
  progress.port1.on("message", (m: IngestProgress) => onProgress?.(m));
  progress.port1.unref();
  control.port1.unref();
  const send = (m: FollowMessage) => {
    try {
      control.port1.postMessage(m);
    } catch {
      /* the follower is gone */
    }
  };
  const result = pool.follow<IngestResult>({ ...job, control: control.port2, progress: progress.port2 }, [
    control.port2,
    progress.port2,
  ]);
  void result.then(
    () => {
      control.port1.close();
      progress.port1.close();
    },
    () => {
      control.port1.close();
      progress.port1.close();
    },
  );
  return {
    result,
    grow: (bytes) => send({ type: "grow", bytes }),
    end: (bytes) => {
      send({ type: "end", bytes });
      return result;
    },
    abort: () => send({ type: "abort" }),
  };
}
