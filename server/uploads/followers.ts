/**
 * Resumable uploads read while they arrive: each gets a follower on a pool thread
 * (server/uploads/pool.ts startFollower), told how far the file has grown after every piece. A
 * follower that finds a refusal before the last byte reports it at once; one whose upload stops
 * growing for FOLLOW_IDLE_MS is stopped (the upload is then read whole when it completes).
 */
import fs from "node:fs";
import path from "node:path";
import type { AppContext } from "../context";
import { holdFile, storageLayout } from "../services/storage";
import type { CaptureSettings } from "../../shared/schemas/capture-settings";
import type { UploadEncoding } from "../../shared/schemas/uploads";
import type { IngestRefusal, IngestResult } from "./ingest";
import { passOutputs, poolFor, type PrereadCapture } from "./pipeline";
import { runIngest, startFollower, type Follower } from "./pool";
import type { UploadTracker } from "./progress";

/** A follower whose upload has not grown for this long is stopped. */
const FOLLOW_IDLE_MS = 5 * 60_000;

interface Following {
  traceId: string;
  follower: Follower;
  lastGrowth: number;
  /** the follower stopped without a result (aborted, its thread died): read the file at the end */
  failed?: boolean;
  release(): void;
}

export interface FollowTarget {
  id: string;
  encoding: UploadEncoding | undefined;
  settings: CaptureSettings;
}

export class Followers {
  private readonly following = new Map<string, Following>();
  private readonly layout;
  private readonly sweep: NodeJS.Timeout;

  constructor(
    private readonly ctx: AppContext,
    /** whether the upload is being read to its end right now (its follower is then left alone) */
    private readonly finishing: (id: string) => boolean,
    /** a refusal found before the last byte */
    private readonly onRefusal: (id: string, refusal: IngestRefusal) => void,
  ) {
    this.layout = storageLayout(ctx.env.dataDir);
    this.sweep = setInterval(() => {
      for (const [id, f] of this.following)
        if (!finishing(id) && Date.now() - f.lastGrowth > FOLLOW_IDLE_MS) this.stop(id);
    }, 60_000);
    this.sweep.unref();
  }

  has(id: string): boolean {
    return this.following.has(id);
  }

  private job(t: FollowTarget, traceId: string) {
    return {
      source: path.join(this.layout.tusDir, t.id),
      encoding: t.encoding ?? ("auto" as const),
      tempDir: this.layout.tempDir,
      tracesDir: this.layout.tracesDir,
      traceId,
      settings: t.settings,
      maxBytes: this.ctx.env.MAX_TRACE_BYTES,
    };
  }

  /** Starts reading an upload while it arrives, when a pool thread has room for it. */
  start(t: FollowTarget, tracker: () => UploadTracker | undefined): void {
    const pool = poolFor(this.ctx);
    if (!pool.canFollow() || this.following.has(t.id)) return;
    const traceId = crypto.randomUUID();
    const out = passOutputs(this.ctx, traceId);
    const holds = [holdFile(out.dataTarget), holdFile(out.copyTarget)];
    const follower = startFollower(pool, this.job(t, traceId), (p) =>
      p.stage === "measuring" ? tracker()?.measuring() : undefined,
    );
    const entry: Following = { traceId, follower, lastGrowth: Date.now(), release: () => holds.forEach((r) => r()) };
    this.following.set(t.id, entry);
    follower.result.then(
      (r) => {
        if (r.ok || this.finishing(t.id)) return;
        // refused before the last byte: nothing of it is kept
        this.following.delete(t.id);
        entry.release();
        this.onRefusal(t.id, r.refusal);
      },
      () => {
        entry.failed = true;
        if (this.finishing(t.id)) return;
        this.following.delete(t.id);
        entry.release();
      },
    );
  }

  /** The upload's file has at least `bytes` bytes on disk. */
  grew(id: string, bytes: number): void {
    const f = this.following.get(id);
    if (!f) return;
    f.lastGrowth = Date.now();
    f.follower.grow(bytes);
  }

  stop(id: string): void {
    const f = this.following.get(id);
    if (!f) return;
    this.following.delete(id);
    f.follower.abort();
    f.release();
  }

  /** The upload is complete (or refused): its follower's files are the pipeline's now. */
  done(id: string): void {
    const f = this.following.get(id);
    if (!f) return;
    this.following.delete(id);
    f.release();
  }

  /**
   * The pass's result for a complete upload of `size` bytes: the follower's when one read it as
   * it came (or, should the follower stop now, a read of the whole file), else undefined.
   */
  preread(t: FollowTarget, size: number, tracker: UploadTracker): PrereadCapture | undefined {
    const entry = this.following.get(t.id);
    if (!entry || entry.failed) return undefined;
    return {
      traceId: entry.traceId,
      result: async (): Promise<IngestResult> => {
        tracker.checking(null);
        try {
          return await entry.follower.end(size);
        } catch {
          const out = passOutputs(this.ctx, entry.traceId);
          await fs.promises.rm(out.dataTarget, { force: true });
          await fs.promises.rm(out.copyTarget, { force: true });
          return runIngest(poolFor(this.ctx), this.job(t, entry.traceId), {
            onQueued: (p) => tracker.queued(p),
            onStart: () => tracker.checking(0),
            onProgress: (p) => (p.stage === "measuring" ? tracker.measuring() : tracker.checking(p.fraction ?? null)),
          });
        }
      },
    };
  }
}
