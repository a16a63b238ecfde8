/**
 * One capture's way to the server: compressed in a Web Worker (CompressionStream "gzip") while the
 * compressed bytes already go out through the tus resumable-upload protocol (tus-js-client), so
 * the transfer starts at once and carries a fraction of the file. A dropped link is retried; while
 * the browser is offline the upload waits and continues from the server's last byte when the link
 * returns — also after a page reload (the compressed bytes and the upload's address are kept in
 * IndexedDB, lib/upload-store.ts). Once the last byte is in, the server's stages (queued, checking,
 * measuring) are read from GET /api/uploads/:id until the trace is stored or refused.
 */
import { Upload, type DetailedError } from "tus-js-client";
import type { CaptureSettings } from "../../../../shared/schemas/capture-settings";
import { RESUMABLE_UPLOAD_PATH, type UploadStatusResponse } from "../../../../shared/schemas/uploads";
import type { UploadedTrace } from "../api/upload-trace";
import { CompressedSource } from "./compressed-source";
import { forgetUpload, patchUpload, saveUpload, savePiece, type SavedUpload } from "./upload-store";
import type { CompressOut } from "../workers/compress.worker";

/** Bytes per PATCH request: small enough that a slow link finishes one well inside a request timeout. */
const CHUNK = 4 * 1024 * 1024;
const STATUS_POLL_MS = 1000;

export type UploadPhase =
  "compressing" | "sending" | "offline" | "interrupted" | "resuming" | "server" | "done" | "error" | "cancelled";

export interface UploadState {
  phase: UploadPhase;
  /** plain bytes the compressor has read */
  compressedRead: number;
  fileBytes: number;
  compressedBytes: number;
  compressionDone: boolean;
  /** compressed bytes the server has acknowledged or is receiving */
  sentBytes: number;
  rateBytesPerS: number | null;
  etaS: number | null;
  /** the server's view once every byte is in */
  server: Pick<UploadStatusResponse, "stage" | "queuePosition" | "fraction"> | null;
  /** after a drop, where the upload went on from */
  resumedFrom: number | null;
  result?: UploadedTrace;
  error?: { status: number; code: string; message: string; details?: Record<string, unknown> };
}

export interface CaptureUploadInit {
  key: string;
  caseId: string;
  file: File | null;
  fileName: string;
  fileBytes: number;
  lastModified: number;
  settings: CaptureSettings;
  traceName?: string;
  /** a reload: the saved pieces and address */
  restored?: { pieces: Blob[]; done: boolean; uploadUrl?: string };
  onState(s: UploadState): void;
}

function parseError(body: string | undefined, status: number): UploadState["error"] {
  try {
    const e = JSON.parse(body ?? "").error;
    if (e?.code) return { status, code: e.code, message: e.message, details: e.details };
  } catch {
    /* not our JSON */
  }
  return { status, code: `http_${status}`, message: (body ?? "").trim() || "The server refused the upload." };
}

const online = () => typeof navigator === "undefined" || navigator.onLine !== false;

/** The page's one compression worker, started while online (a worker's script is fetched). */
let compressor: Worker | null = null;
let compressJobs = 0;
const compressHandlers = new Map<number, (m: CompressOut) => void>();

function getCompressor(): Worker {
  if (compressor) return compressor;
  const w = new Worker(new URL("../workers/compress.worker.ts", import.meta.url), { type: "module" });
  w.onmessage = (e: MessageEvent<CompressOut>) => compressHandlers.get(e.data.id)?.(e.data);
  w.onerror = () => {
    // a broken worker fails what it had and is made again next time
    for (const [id, h] of compressHandlers) h({ id, type: "error", message: "the compression worker stopped" });
    compressHandlers.clear();
    if (compressor === w) compressor = null;
  };
  compressor = w;
  return w;
}

/** Loads the compression worker ahead of the first capture (call while the page is online). */
export function warmCompressor(): void {
  if (typeof Worker !== "undefined") getCompressor();
}

export class CaptureUpload {
  private state: UploadState;
  private source = new CompressedSource();
  private tus: Upload | null = null;
  private compressId = 0;
  private pieceIndex = 0;
  private stopped = false;
  private samples: { t: number; sent: number }[] = [];
  private settled!: (s: UploadState) => void;
  /** resolves when the upload ends (done, error or cancelled) */
  readonly finished: Promise<UploadState>;

  constructor(private readonly init: CaptureUploadInit) {
    this.state = {
      phase: "compressing",
      compressedRead: 0,
      fileBytes: init.fileBytes,
      compressedBytes: 0,
      compressionDone: false,
      sentBytes: 0,
      rateBytesPerS: null,
      etaS: null,
      server: null,
      resumedFrom: null,
    };
    this.finished = new Promise((r) => (this.settled = r));
  }

  private set(p: Partial<UploadState>): void {
    this.state = { ...this.state, ...p };
    this.init.onState(this.state);
    if (p.phase === "done" || p.phase === "error" || p.phase === "cancelled") this.settled(this.state);
  }

  async start(): Promise<void> {
    const r = this.init.restored;
    if (r) {
      for (const p of r.pieces) this.source.add(p);
      this.pieceIndex = r.pieces.length;
      if (r.done) this.source.finish();
      this.set({
        compressedBytes: this.source.bytes,
        compressionDone: r.done,
        compressedRead: r.done ? this.init.fileBytes : 0,
      });
    } else {
      await saveUpload(this.saved());
    }
    if (!this.source.done) {
      if (!this.init.file) {
        this.set({
          phase: "error",
          error: { status: 0, code: "file_needed", message: "Add the file again to finish this upload." },
        });
        return;
      }
      this.compress(this.init.file);
    }
    this.send(r?.uploadUrl);
  }

  private saved(): SavedUpload {
    return {
      key: this.init.key,
      caseId: this.init.caseId,
      fileName: this.init.fileName,
      fileBytes: this.init.fileBytes,
      lastModified: this.init.lastModified,
      settings: this.init.settings,
      traceName: this.init.traceName,
      compressedDone: false,
      compressedBytes: 0,
      createdAt: Date.now(),
    };
  }

  private compress(file: File): void {
    const id = ++compressJobs;
    this.compressId = id;
    compressHandlers.set(id, (m) => {
      if (m.type === "piece") {
        const blob = new Blob([m.data]);
        this.source.add(blob);
        void savePiece(this.init.key, this.pieceIndex++, blob);
        this.set({ compressedRead: m.read, compressedBytes: this.source.bytes });
        return;
      }
      compressHandlers.delete(id);
      if (m.type === "done") {
        this.source.finish();
        void patchUpload(this.init.key, { compressedDone: true, compressedBytes: this.source.bytes });
        this.set({
          compressedRead: m.read,
          compressedBytes: this.source.bytes,
          compressionDone: true,
          etaS: this.eta(this.state.rateBytesPerS),
        });
      } else {
        this.source.fail(new Error(m.message));
        this.set({
          phase: "error",
          error: {
            status: 0,
            code: "compress_failed",
            message: `The browser could not compress the file: ${m.message}`,
          },
        });
      }
    });
    try {
      getCompressor().postMessage({ id, file });
    } catch (err) {
      compressHandlers.delete(id);
      this.source.fail(err instanceof Error ? err : new Error(String(err)));
      this.set({
        phase: "error",
        error: { status: 0, code: "compress_failed", message: "The browser could not compress the file." },
      });
    }
  }

  /** Estimated compressed total: exact once compression is done, else extrapolated from the ratio so far. */
  private estimatedTotal(): number | null {
    if (this.source.done) return this.source.bytes;
    if (!this.state.compressedRead || !this.source.bytes) return null;
    return (this.source.bytes / this.state.compressedRead) * this.init.fileBytes;
  }

  private eta(rate: number | null): number | null {
    const total = this.estimatedTotal();
    return rate && rate > 0 && total != null ? Math.max(0, (total - this.state.sentBytes) / rate) : null;
  }

  private progress(sent: number): void {
    if (this.state.phase === "done" || this.state.phase === "error" || this.state.phase === "cancelled") return;
    const now = performance.now();
    this.samples.push({ t: now, sent });
    while (this.samples.length > 2 && now - this.samples[0].t > 5000) this.samples.shift();
    const first = this.samples[0];
    const dt = (now - first.t) / 1000;
    const rate = dt > 0.5 ? (sent - first.sent) / dt : this.state.rateBytesPerS;
    const phase: UploadPhase = this.state.phase === "server" ? "server" : sent > 0 ? "sending" : this.state.phase;
    this.set({ phase, sentBytes: sent, rateBytesPerS: rate, etaS: this.eta(rate) });
    // every byte is on its way: the server's stages come next
    if (this.source.done && sent >= this.source.bytes) void this.watchServer();
  }

  private send(uploadUrl?: string): void {
    const i = this.init;
    const up = new Upload(this.source as unknown as Blob, {
      // a reloaded upload continues its own address or not at all (never a new upload in its place:
      // the address may belong to another account signed in on this device before)
      endpoint: uploadUrl ? null : new URL(RESUMABLE_UPLOAD_PATH, window.location.origin).href,
      uploadUrl: uploadUrl ?? null,
      uploadLengthDeferred: true,
      chunkSize: CHUNK,
      retryDelays: [0, 1000, 2000, 4000],
      storeFingerprintForResuming: false,
      fileReader: { openFile: async () => this.source as never },
      metadata: {
        caseId: i.caseId,
        filename: i.fileName,
        settings: JSON.stringify(i.settings),
        ...(i.traceName ? { name: i.traceName } : {}),
        fileBytes: String(i.fileBytes),
        encoding: "gzip",
      },
      onUploadUrlAvailable: () => void patchUpload(i.key, { uploadUrl: up.url ?? undefined }),
      onProgress: (sent) => this.progress(sent),
      onShouldRetry: (err, attempt) => this.shouldRetry(err as DetailedError, attempt),
      onSuccess: ({ lastResponse }) => void this.succeeded(lastResponse.getBody()),
      onError: (err) => void this.failed(err as DetailedError),
    });
    this.tus = up;
    if (uploadUrl) this.set({ phase: "resuming" });
    if (online()) up.start();
    else this.waitForLink();
  }

  private shouldRetry(err: DetailedError, _attempt: number): boolean {
    const status = err.originalResponse?.getStatus() ?? 0;
    if (status >= 400 && status < 500 && status !== 409 && status !== 423) return false;
    if (this.stopped) return false;
    this.set({
      phase: online() ? "resuming" : "offline",
      resumedFrom: this.state.sentBytes,
      rateBytesPerS: null,
      etaS: null,
    });
    this.samples = [];
    return online();
  }

  /** Waits for the browser to be online again (or a while, in case it never says), then continues. */
  private waitForLink(): void {
    this.set({ phase: "offline", rateBytesPerS: null, etaS: null });
    const go = () => {
      window.removeEventListener("online", go);
      clearTimeout(timer);
      if (this.stopped) return;
      this.set({ phase: "resuming" });
      this.samples = [];
      this.tus?.start();
    };
    const timer = setTimeout(go, online() ? 5000 : 30_000);
    window.addEventListener("online", go);
  }

  private async failed(err: DetailedError): Promise<void> {
    if (this.stopped) return;
    const res = err.originalResponse;
    const status = res?.getStatus() ?? 0;
    if ((status === 404 || status === 410) && this.init.restored) {
      await forgetUpload(this.init.key);
      const message =
        "The server no longer has this upload (it expired, or another account started it on this device). " +
        "Add the file again to upload it.";
      this.set({ phase: "error", error: { status, code: "file_needed", message } });
      return;
    }
    if (status >= 400 && status < 500 && status !== 409 && status !== 423) {
      await forgetUpload(this.init.key);
      this.set({ phase: "error", error: parseError(res?.getBody(), status) });
      return;
    }
    // every byte was sent but the answer was lost: ask the server how it ended
    if (this.source.done && this.state.sentBytes >= this.source.bytes && this.tus?.url) {
      if (await this.watchServer(true)) return;
    }
    this.waitForLink();
  }

  private async succeeded(body: string): Promise<void> {
    let trace: UploadedTrace | null;
    try {
      trace = body ? (JSON.parse(body).trace as UploadedTrace) : null;
    } catch {
      trace = null;
    }
    if (!trace) {
      await this.watchServer(true);
      return;
    }
    await forgetUpload(this.init.key);
    this.set({ phase: "done", result: trace, server: { stage: "stored", queuePosition: null, fraction: null } });
  }

  private watching = false;

  private ended(): boolean {
    return this.state.phase === "done" || this.state.phase === "error" || this.state.phase === "cancelled";
  }

  /**
   * Reads the server's stages while it works on the capture. With `untilEnd` it also finishes the
   * upload from there (the last answer was lost). Resolves true when the upload ended.
   */
  private async watchServer(untilEnd = false): Promise<boolean> {
    const url = this.tus?.url;
    if (!url) return false;
    if (this.watching && !untilEnd) return false;
    this.watching = true;
    this.set({ phase: "server", sentBytes: this.source.bytes, rateBytesPerS: null, etaS: null });
    try {
      for (;;) {
        if (this.stopped || this.ended()) return true;
        const res = await fetch(url, { credentials: "same-origin", cache: "no-store" }).catch(() => null);
        if (res?.ok) {
          const s = (await res.json()) as UploadStatusResponse;
          if (this.ended()) return true;
          this.set({ server: { stage: s.stage, queuePosition: s.queuePosition, fraction: s.fraction } });
          if (untilEnd && s.stage === "stored" && s.traceId) {
            const t = await fetch(`/api/traces/${encodeURIComponent(s.traceId)}`, { credentials: "same-origin" }).then(
              (r) => r.json(),
            );
            await forgetUpload(this.init.key);
            this.set({ phase: "done", result: t as UploadedTrace });
            return true;
          }
          if (untilEnd && s.stage === "refused" && s.error) {
            await forgetUpload(this.init.key);
            this.set({ phase: "error", error: { status: 400, ...s.error } });
            return true;
          }
        } else if (res && res.status === 404 && untilEnd) {
          return false;
        }
        await new Promise((r) => setTimeout(r, STATUS_POLL_MS));
      }
    } finally {
      this.watching = false;
    }
  }

  /** Stops for good and removes what the server has of it. */
  async cancel(): Promise<void> {
    this.stopped = true;
    compressHandlers.delete(this.compressId);
    await this.tus?.abort(true).catch(() => {});
    await forgetUpload(this.init.key);
    this.set({ phase: "cancelled" });
  }

  /** Stops sending (the page is leaving); the saved upload continues on the next visit. */
  pause(): void {
    this.stopped = true;
    compressHandlers.delete(this.compressId);
    void this.tus?.abort(false);
  }
}
