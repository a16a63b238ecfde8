/**
 * Resumable capture uploads: the tus 1.0.0 protocol (creation, creation-defer-length, termination,
 * expiration) at /api/uploads through @tus/server with its file store under <data>/tmp/tus.
 *
 * - Creation (POST) is where the upload is judged, before its first byte: the session, the case
 *   (the actor may add a trace to it in its state), the capture settings and the declared sizes.
 *   Refused creations leave nothing.
 * - Every later request (HEAD, PATCH, DELETE) must come from the user who created the upload;
 *   anyone else — another tenant guessing an id — gets 404, like an id that does not exist.
 * - The last byte runs the pipeline (server/uploads/pipeline.ts). Its answer carries the stored
 *   trace (`200 { trace }`) or the refusal in the API's error shape; a refused upload is removed.
 *   A finished upload keeps a small marker so that a client resuming it is told it is complete
 *   instead of starting again.
 */
import fs from "node:fs";
import path from "node:path";
import type { IncomingMessage } from "node:http";
import type { Request as ExpressRequest, Response as ExpressResponse } from "express";
import { Server, EVENTS, MemoryLocker, Upload } from "@tus/server";
import { FileStore } from "@tus/file-store";
import type { AppContext } from "../context";
import type { Actor } from "../auth/session";
import { assertCanAddTrace } from "../auth/policies/traces";
import { HttpError } from "../http/errors";
import { parseWith } from "../http/validate";
import { getCaseRow } from "../services/cases";
import { noteNewMaterial } from "../services/queue";
import { getTraceRow, presentTrace } from "../services/traces";
import { storageLayout } from "../services/storage";
import { RESUMABLE_UPLOAD_PATH, uploadMetadataSchema, type UploadMetadata } from "../../shared/schemas/uploads";
import { holdFile } from "../services/storage";
import { ingestTrace, passOutputs, poolFor } from "./pipeline";
import { runIngest, startFollower, type Follower } from "./pool";
import type { IngestRefusal, IngestResult } from "./ingest";
import { trackUpload, uploadTracker, type UploadTracker } from "./progress";

const ID = /^[0-9a-f]{32}$/;
const ACTOR = Symbol("uploadActor");
/** A follower whose upload has not grown for this long is stopped (the upload is read at its end instead). */
const FOLLOW_IDLE_MS = 5 * 60_000;
/** How long a refusal found while the upload arrived is remembered for its sender. */
const REFUSAL_KEEP_MS = 60 * 60_000;

/** An upload being read by a pool thread while it arrives. */
interface Following {
  traceId: string;
  follower: Follower;
  lastGrowth: number;
  /** a refusal found before the last byte */
  refusal?: IngestRefusal;
  /** the follower stopped without a result (aborted, its thread died): read the file at the end */
  failed?: boolean;
  release(): void;
}

/** The upload info the file store keeps beside each upload (`<id>.json`), with our marker. */
export interface StoredUploadInfo {
  id: string;
  size?: number;
  offset: number;
  metadata?: Record<string, string | null>;
  creation_date?: string;
  /** set once the pipeline has stored the trace */
  done?: { traceId: string; at: string };
}

type TusError = { status_code: number; body: string };

/** An HttpError as tus throws it: the status and the API's JSON error body. */
function tusError(err: HttpError): TusError {
  return { status_code: err.status, body: JSON.stringify({ error: { code: err.code, message: err.message, ...(err.details !== undefined ? { details: err.details } : {}) } }) };
}

function nodeReq(req: { runtime?: { node?: { req: IncomingMessage } } }): IncomingMessage & { [ACTOR]?: Actor } {
  const n = req.runtime?.node?.req;
  if (!n) throw new Error("tus request without its node request");
  return n as IncomingMessage & { [ACTOR]?: Actor };
}

function actorOf(req: object): Actor {
  const a = nodeReq(req as never)[ACTOR];
  if (!a) throw tusError(new HttpError(401, "unauthenticated", "Sign in to continue."));
  return a;
}

/**
 * The file store, aware of uploads the pipeline is reading or has finished: they report their
 * full length (so a client that lost the last answer is told it is done) and cannot be removed.
 */
class CaptureStore extends FileStore {
  readonly busy = new Set<string>();

  info(id: string): Promise<StoredUploadInfo | undefined> {
    return this.configstore.get(id) as Promise<StoredUploadInfo | undefined>;
  }

  async getUpload(id: string): Promise<Upload> {
    const info = await this.info(id);
    if (info && (info.done || this.busy.has(id)) && info.size !== undefined) {
      return new Upload({ id, size: info.size, offset: info.size, metadata: info.metadata as Upload["metadata"], creation_date: info.creation_date });
    }
    return super.getUpload(id);
  }

  async remove(id: string): Promise<void> {
    if (this.busy.has(id)) throw { status_code: 409, body: "The upload is being read; it cannot be removed now.\n" };
    await fs.promises.rm(path.join(this.directory, id), { force: true });
    await fs.promises.rm(path.join(this.directory, `${id}.json`), { force: true });
  }

  async markDone(id: string, traceId: string, at: Date): Promise<void> {
    const info = await this.info(id);
    if (!info) return;
    await this.configstore.set(id, { ...info, offset: info.size ?? info.offset, done: { traceId, at: at.toISOString() } } as never);
    await fs.promises.rm(path.join(this.directory, id), { force: true });
  }
}

export interface ResumableUploads {
  /** Express handler for every method on /api/uploads and /api/uploads/:id except GET */
  handle(req: ExpressRequest, res: ExpressResponse, actor: Actor): Promise<void>;
  /** the creator's view of an upload, or undefined (also for anyone else) */
  info(id: string, actor: Actor): Promise<StoredUploadInfo | undefined>;
  store: CaptureStore;
}

function metadataOf(info: { metadata?: Record<string, string | null> | null }): UploadMetadata & { uploaderId: string; uploaderName: string } {
  const m = (info.metadata ?? {}) as Record<string, string>;
  const parsed = uploadMetadataSchema.parse(m);
  return { ...parsed, uploaderId: m.uploaderId, uploaderName: m.uploaderName };
}

function trackerFor(ctx: AppContext, upload: { id: string; size?: number; offset?: number; metadata?: Record<string, string | null> | null }): UploadTracker {
  const existing = uploadTracker(upload.id);
  if (existing) return existing;
  const m = metadataOf(upload);
  return trackUpload(ctx, {
    uploadId: upload.id,
    caseId: m.caseId,
    name: m.filename,
    by: { userId: m.uploaderId, name: m.uploaderName },
    compressed: m.encoding !== "identity",
    fileBytes: m.fileBytes ?? null,
    totalBytes: upload.size ?? null,
    receivedBytes: upload.offset ?? 0,
  });
}

export function createResumableUploads(ctx: AppContext): ResumableUploads {
  const layout = storageLayout(ctx.env.dataDir);
  fs.mkdirSync(layout.tusDir, { recursive: true });
  const expiryMs = ctx.env.UPLOAD_EXPIRY_HOURS * 3600_000;
  const store = new CaptureStore({ directory: layout.tusDir, expirationPeriodInMilliseconds: expiryMs });
  const finishing = new Map<string, Promise<{ status_code: number; headers: Record<string, string>; body: string }>>();

  /** 404 unless the upload exists and this actor created it. */
  async function ownUpload(id: string, actor: Actor): Promise<StoredUploadInfo> {
    const info = ID.test(id) ? await store.info(id) : undefined;
    if (!info || info.metadata?.uploaderId !== actor.id) throw tusError(new HttpError(404, "not_found", "Upload not found."));
    return info;
  }

  const following = new Map<string, Following>();
  const refused = new Map<string, { uploaderId: string; refusal: IngestRefusal }>();

  /** Starts reading a new upload while it arrives (when a pool thread has room for it). */
  function follow(upload: Upload): void {
    const pool = poolFor(ctx);
    if (!pool.canFollow() || following.has(upload.id)) return;
    const m = metadataOf(upload);
    const traceId = crypto.randomUUID();
    const out = passOutputs(ctx, traceId);
    const holds = [holdFile(out.dataTarget), holdFile(out.copyTarget)];
    const follower = startFollower(
      pool,
      { source: path.join(layout.tusDir, upload.id), encoding: m.encoding ?? "auto", tempDir: layout.tempDir, tracesDir: layout.tracesDir, traceId, settings: m.settings, maxBytes: ctx.env.MAX_TRACE_BYTES },
      (p) => (p.stage === "measuring" ? uploadTracker(upload.id)?.measuring() : undefined),
    );
    const entry: Following = { traceId, follower, lastGrowth: Date.now(), release: () => holds.forEach((r) => r()) };
    following.set(upload.id, entry);
    follower.result.then(
      (r) => {
        if (r.ok || store.busy.has(upload.id)) return;
        // refused before the last byte: say so now, and keep nothing of it
        entry.refusal = r.refusal;
        following.delete(upload.id);
        entry.release();
        refused.set(upload.id, { uploaderId: m.uploaderId, refusal: r.refusal });
        setTimeout(() => refused.delete(upload.id), REFUSAL_KEEP_MS).unref();
        uploadTracker(upload.id)?.refused({ code: r.refusal.code, message: r.refusal.message });
        void store.remove(upload.id).catch(() => {});
      },
      () => {
        entry.failed = true;
        if (!store.busy.has(upload.id)) {
          following.delete(upload.id);
          entry.release();
        }
      },
    );
  }

  function grew(id: string, bytes: number): void {
    const f = following.get(id);
    if (!f) return;
    f.lastGrowth = Date.now();
    f.follower.grow(bytes);
  }

  function unfollow(id: string): void {
    const f = following.get(id);
    if (!f) return;
    following.delete(id);
    f.follower.abort();
    f.release();
  }

  const idleSweep = setInterval(() => {
    for (const [id, f] of following) if (!store.busy.has(id) && Date.now() - f.lastGrowth > FOLLOW_IDLE_MS) unfollow(id);
  }, 60_000);
  idleSweep.unref();

  /** The pass's result: the follower's when it read the upload as it came, else a read of the file now. */
  function readFor(upload: Upload, m: ReturnType<typeof metadataOf>, tracker: UploadTracker) {
    const entry = following.get(upload.id);
    if (!entry || entry.failed) return undefined;
    return {
      traceId: entry.traceId,
      result: async (): Promise<IngestResult> => {
        tracker.checking(null);
        try {
          return await entry.follower.end(upload.size ?? 0);
        } catch {
          // the follower stopped (its thread died): read the whole file after all
          const out = passOutputs(ctx, entry.traceId);
          await fs.promises.rm(out.dataTarget, { force: true });
          await fs.promises.rm(out.copyTarget, { force: true });
          return runIngest(
            poolFor(ctx),
            { source: path.join(layout.tusDir, upload.id), encoding: m.encoding ?? "auto", tempDir: layout.tempDir, tracesDir: layout.tracesDir, traceId: entry.traceId, settings: m.settings, maxBytes: ctx.env.MAX_TRACE_BYTES },
            { onQueued: (p) => tracker.queued(p), onStart: () => tracker.checking(0), onProgress: (p) => (p.stage === "measuring" ? tracker.measuring() : tracker.checking(p.fraction ?? null)) },
          );
        }
      },
    };
  }

  async function finish(upload: Upload, actor: Actor) {
    const m = metadataOf(upload);
    const tracker = trackerFor(ctx, upload);
    const source = path.join(layout.tusDir, upload.id);
    store.busy.add(upload.id);
    const read = readFor(upload, m, tracker);
    try {
      const row = await ingestTrace(
        ctx,
        actor,
        m.caseId,
        { path: source, encoding: m.encoding ?? "auto", originalName: m.filename },
        { settings: m.settings, name: m.name },
        tracker,
        read,
      );
      await store.markDone(upload.id, row.id, ctx.now());
      await noteNewMaterial(ctx, m.caseId, actor.id);
      return { status_code: 200, headers: { "Content-Type": "application/json" }, body: JSON.stringify({ trace: presentTrace(row) }) };
    } catch (err) {
      store.busy.delete(upload.id);
      if (err instanceof HttpError) {
        // a refused capture leaves nothing behind: the upload goes with it
        await store.remove(upload.id).catch(() => {});
        throw tusError(err);
      }
      ctx.logger.error({ err, uploadId: upload.id }, "resumable upload could not be stored");
      throw tusError(new HttpError(500, "internal", "The server could not store this capture. Try again."));
    } finally {
      store.busy.delete(upload.id);
      const f = following.get(upload.id);
      if (f) {
        following.delete(upload.id);
        f.release();
      }
    }
  }

  /** Reads a complete upload once, whoever asks first (its last PATCH, or a HEAD after a restart). */
  function startFinish(upload: Upload, actor: Actor) {
    let p = finishing.get(upload.id);
    if (p) return p;
    p = finish(upload, actor);
    finishing.set(upload.id, p);
    void p.then(
      () => finishing.delete(upload.id),
      () => finishing.delete(upload.id),
    );
    return p;
  }

  const tus = new Server({
    path: RESUMABLE_UPLOAD_PATH,
    datastore: store,
    maxSize: ctx.env.MAX_TRACE_BYTES + 64 * 1024,
    relativeLocation: true,
    allowedOrigins: [],
    postReceiveInterval: 500,
    disableTerminationForFinishedUploads: true,
    namingFunction: () => crypto.randomUUID().replace(/-/g, ""),
    getFileIdFromRequest: (_req, lastPath) => (lastPath && ID.test(lastPath) ? lastPath : undefined),
    locker: new MemoryLocker(), // one server process per data folder

    async onIncomingRequest(req, id) {
      const actor = actorOf(req);
      if (req.method === "POST") return;
      const r = refused.get(id);
      if (r && r.uploaderId === actor.id) throw tusError(new HttpError(r.refusal.status, r.refusal.code, r.refusal.message, r.refusal.details));
      const info = await ownUpload(id, actor);
      if (req.method === "PATCH" && !info.done) {
        // the case may have been submitted or withdrawn since: stop taking bytes for it
        try {
          assertCanAddTrace(actor, getCaseRow(ctx.db, String(info.metadata?.caseId)));
        } catch (err) {
          if (err instanceof HttpError) throw tusError(err);
          throw err;
        }
      }
      if (req.method === "HEAD" && !info.done && !store.busy.has(id) && !finishing.has(id)) {
        const offset = await fs.promises.stat(path.join(layout.tusDir, id)).then((s) => s.size, () => 0);
        const upload = new Upload({ id, size: info.size, offset, metadata: info.metadata as Upload["metadata"], creation_date: info.creation_date });
        if (info.size !== undefined && offset === info.size) {
          // every byte is in but it was never read (the server stopped while reading it): read it now
          startFinish(upload, actor);
          return;
        }
        const t = trackerFor(ctx, info);
        if (offset > 0 || t.stage === "interrupted") t.resuming(offset);
        // a follower lost (a restart): begin one now and tell it what is already there
        if (!following.has(id) && !refused.has(id)) {
          follow(upload);
          grew(id, offset);
        }
      }
    },

    async onUploadCreate(req, upload) {
      const actor = actorOf(req);
      try {
        const m = parseWith(uploadMetadataSchema, upload.metadata ?? {}, "upload metadata");
        assertCanAddTrace(actor, getCaseRow(ctx.db, m.caseId));
        if (m.fileBytes !== undefined && m.fileBytes > ctx.env.MAX_TRACE_BYTES) {
          throw new HttpError(413, "too_large", `The file is over the ${Math.round(ctx.env.MAX_TRACE_BYTES / 1048576)} MB limit.`);
        }
        const metadata: Record<string, string> = {};
        for (const [k, v] of Object.entries(upload.metadata ?? {})) if (v != null && k in uploadMetadataSchema.shape) metadata[k] = v;
        metadata.uploaderId = actor.id;
        metadata.uploaderName = actor.name;
        return { metadata };
      } catch (err) {
        if (err instanceof HttpError) throw tusError(err);
        throw err;
      }
    },

    async onUploadFinish(req, upload) {
      const actor = actorOf(req);
      const r = refused.get(upload.id);
      if (r) throw tusError(new HttpError(r.refusal.status, r.refusal.code, r.refusal.message, r.refusal.details));
      let p = finishing.get(upload.id);
      if (!p) {
        const info = await store.info(upload.id);
        if (info?.done) {
          const row = getTraceRow(ctx, info.done.traceId);
          const body = JSON.stringify(row ? { trace: presentTrace(row) } : { trace: null });
          return { status_code: 200, headers: { "Content-Type": "application/json" }, body };
        }
        p = startFinish(upload, actor);
      }
      return p;
    },

    onResponseError(_req, err) {
      const e = err as { status_code?: number; body?: string };
      if (typeof e.status_code === "number" && typeof e.body === "string") return undefined;
      ctx.logger.error({ err }, "resumable upload request failed");
      return undefined;
    },
  });

  tus.on(EVENTS.POST_CREATE, (_req, upload: Upload) => {
    trackerFor(ctx, upload).received(0);
    follow(upload);
  });
  tus.on(EVENTS.POST_RECEIVE, (_req, upload: Upload) => {
    const t = trackerFor(ctx, upload);
    if (upload.size !== undefined) t.declareTotal(upload.size);
    t.received(upload.offset);
    grew(upload.id, upload.offset);
  });
  tus.on(EVENTS.POST_TERMINATE, (_req, _res, id: string) => {
    unfollow(id);
    uploadTracker(id)?.cancelled();
  });

  return {
    store,
    async info(id, actor) {
      const info = ID.test(id) ? await store.info(id) : undefined;
      return info && info.metadata?.uploaderId === actor.id ? info : undefined;
    },
    async handle(req, res, actor) {
      (req as unknown as { [ACTOR]: Actor })[ACTOR] = actor;
      if (req.method === "PATCH") {
        const id = path.basename(req.path);
        const started = Date.now();
        // A client resuming a deferred-length upload declares the length again with its last
        // piece (it cannot know an interrupted piece already did): the same value changes nothing.
        const declared = req.headers["upload-length"];
        if (typeof declared === "string" && ID.test(id)) {
          const info = await store.info(id);
          if (info?.size !== undefined && String(info.size) === declared.trim()) {
            delete req.headers["upload-length"];
            // the protocol handler reads the raw header list too
            for (let i = req.rawHeaders.length - 2; i >= 0; i -= 2) if (req.rawHeaders[i].toLowerCase() === "upload-length") req.rawHeaders.splice(i, 2);
          }
        }
        req.once("close", () => {
          // the link dropped part-way through this piece
          if (!req.complete && Date.now() - started > 0) uploadTracker(id)?.interrupted();
        });
      }
      await tus.handle(req, res);
      if (req.method === "PATCH") {
        // whatever this piece brought is on disk now: the follower may read up to there
        const id = path.basename(req.path);
        if (ID.test(id)) {
          const size = await fs.promises.stat(path.join(layout.tusDir, id)).then((x) => x.size, () => null);
          if (size !== null) grew(id, size);
        }
      }
    },
  };
}
