/**
 * The progress of each capture upload as the server sees it, kept in memory and pushed to the case
 * room as `upload:progress` (shared/realtime.ts UploadProgressPayload), so the tech's other screens
 * and the expert see a capture coming in. Byte counts are throttled to two pushes a second; stage
 * changes go out at once. A finished upload's record stays an hour for `GET /api/uploads/:id`.
 */
import type { AppContext } from "../context";
import type { UploadProgressPayload, UploadStage } from "../../shared/realtime";

const PUSH_GAP_MS = 500;
/** No byte for this long while sending: the link is treated as dropped. */
export const STALL_MS = 15_000;
const KEEP_DONE_MS = 60 * 60_000;
/** The rate is measured over this window. */
const RATE_WINDOW_MS = 5_000;

export interface TrackerInit {
  uploadId: string;
  caseId: string;
  name: string;
  by: { userId: string; name: string };
  compressed: boolean;
  fileBytes: number | null;
  totalBytes: number | null;
  receivedBytes?: number;
}

const FINAL: UploadStage[] = ["stored", "refused", "cancelled"];

export class UploadTracker {
  private state: UploadProgressPayload;
  private samples: { t: number; bytes: number }[] = [];
  private lastPush = 0;
  private pending: NodeJS.Timeout | null = null;
  private stall: NodeJS.Timeout | null = null;

  constructor(
    private readonly ctx: AppContext,
    init: TrackerInit,
    private readonly onFinal: (t: UploadTracker) => void,
  ) {
    this.state = {
      caseId: init.caseId,
      uploadId: init.uploadId,
      name: init.name,
      by: init.by,
      stage: "sending",
      receivedBytes: init.receivedBytes ?? 0,
      totalBytes: init.totalBytes,
      fileBytes: init.fileBytes,
      compressed: init.compressed,
      rateBytesPerS: null,
      etaS: null,
      queuePosition: null,
      fraction: null,
      traceId: null,
      error: null,
      at: ctx.now().toISOString(),
    };
  }

  get stage(): UploadStage {
    return this.state.stage;
  }

  get caseId(): string {
    return this.state.caseId;
  }

  snapshot(): UploadProgressPayload {
    return { ...this.state };
  }

  /** Bytes have arrived: `receivedBytes` is the new total. */
  received(receivedBytes: number): void {
    const now = Date.now();
    this.samples.push({ t: now, bytes: receivedBytes });
    while (this.samples.length > 2 && now - this.samples[0].t > RATE_WINDOW_MS) this.samples.shift();
    const first = this.samples[0];
    const dt = (now - first.t) / 1000;
    const rate = dt >= 0.5 ? (receivedBytes - first.bytes) / dt : this.state.rateBytesPerS;
    const total = this.state.totalBytes;
    const eta = rate && rate > 0 && total != null ? Math.max(0, (total - receivedBytes) / rate) : null;
    const stageChanged = this.state.stage !== "sending";
    this.set({ stage: "sending", receivedBytes, rateBytesPerS: rate ?? null, etaS: eta, error: null }, !stageChanged);
    this.armStall();
  }

  declareTotal(totalBytes: number): void {
    this.state.totalBytes = totalBytes;
  }

  interrupted(): void {
    if (this.state.stage !== "sending" && this.state.stage !== "resuming") return;
    this.samples = [];
    this.set({ stage: "interrupted", rateBytesPerS: null, etaS: null });
  }

  resuming(receivedBytes: number): void {
    if (FINAL.includes(this.state.stage)) return;
    this.samples = [];
    this.set({ stage: "resuming", receivedBytes, rateBytesPerS: null, etaS: null });
  }

  queued(position: number): void {
    this.clearStall();
    this.set({ stage: "queued", queuePosition: position, rateBytesPerS: null, etaS: null });
  }

  checking(fraction: number | null = null): void {
    this.clearStall();
    const stageChanged = this.state.stage !== "checking";
    this.set({ stage: "checking", queuePosition: null, fraction, rateBytesPerS: null, etaS: null }, !stageChanged);
  }

  measuring(): void {
    this.set({ stage: "measuring", fraction: null });
  }

  stored(traceId: string): void {
    this.finish({ stage: "stored", traceId, fraction: null, queuePosition: null });
  }

  refused(error: { code: string; message: string }): void {
    this.finish({ stage: "refused", error, fraction: null, queuePosition: null });
  }

  cancelled(): void {
    this.finish({ stage: "cancelled", rateBytesPerS: null, etaS: null });
  }

  private finish(p: Partial<UploadProgressPayload>): void {
    this.clearStall();
    this.set(p);
    this.onFinal(this);
  }

  private armStall(): void {
    this.clearStall();
    this.stall = setTimeout(() => this.interrupted(), STALL_MS);
    this.stall.unref();
  }

  private clearStall(): void {
    if (this.stall) clearTimeout(this.stall);
    this.stall = null;
  }

  /** Updates the state; pushes now, or (throttled) within PUSH_GAP_MS. */
  private set(p: Partial<UploadProgressPayload>, throttled = false): void {
    Object.assign(this.state, p, { at: this.ctx.now().toISOString() });
    const now = Date.now();
    if (throttled && now - this.lastPush < PUSH_GAP_MS) {
      if (!this.pending) {
        this.pending = setTimeout(() => this.push(), PUSH_GAP_MS - (now - this.lastPush));
        this.pending.unref();
      }
      return;
    }
    this.push();
  }

  private push(): void {
    if (this.pending) clearTimeout(this.pending);
    this.pending = null;
    this.lastPush = Date.now();
    this.ctx.realtime.toCase(this.state.caseId, "upload:progress", this.snapshot());
  }
}

/** Trackers by upload id (all servers of the process; upload ids are random). */
const trackers = new Map<string, UploadTracker>();

export function trackUpload(ctx: AppContext, init: TrackerInit): UploadTracker {
  const existing = trackers.get(init.uploadId);
  if (existing) return existing;
  const t = new UploadTracker(ctx, init, () => {
    setTimeout(() => {
      if (trackers.get(init.uploadId) === t) trackers.delete(init.uploadId);
    }, KEEP_DONE_MS).unref();
  });
  trackers.set(init.uploadId, t);
  return t;
}

export function uploadTracker(uploadId: string): UploadTracker | undefined {
  return trackers.get(uploadId);
}

/** The uploads of a case still under way (what a screen opened mid-upload shows first). */
export function activeUploads(caseId: string): UploadProgressPayload[] {
  return [...trackers.values()].filter((t) => t.caseId === caseId && !FINAL.includes(t.stage)).map((t) => t.snapshot());
}
