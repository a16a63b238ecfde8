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
import { getCaseRow } from "../workflow/records";
import { noteNewMaterial } from "../workflow/commands/data";
import { getTraceRow, presentTrace } from "../services/traces";
import { storageLayout } from "../services/storage";
import { RESUMABLE_UPLOAD_PATH, uploadMetadataSchema, type UploadMetadata } from "../../shared/schemas/uploads";
import { ingestTrace, type OnStore } from "./pipeline";
import { claimUpload } from "./claims";
import type { IngestRefusal } from "./ingest";
import { Followers } from "./followers";
import { trackUpload, uploadTracker, type UploadTracker } from "./progress";

const ID = /^[0-9a-f]{32}$/;
const ACTOR = Symbol("uploadActor");
/** How long a refusal found while the upload arrived is remembered for its sender. */
const REFUSAL_KEEP_MS = 60 * 60_000;

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
  return {
    status_code: err.status,
    body: JSON.stringify({
      error: { code: err.code, message: err.message, ...(err.details !== undefined ? { details: err.details } : {}) },
    }),
  };
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
      return new Upload({
        id,
        size: info.size,
        offset: info.size,
        metadata: info.metadata as Upload["metadata"],
        creation_date: info.creation_date,
      });
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
    await this.configstore.set(id, {
      ...info,
      offset: info.size ?? info.offset,
      done: { traceId, at: at.toISOString() },
    } as never);
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

function metadataOf(info: {
  metadata?: Record<string, string | null> | null;
}): UploadMetadata & { uploaderId: string; uploaderName: string } {
  const m = (info.metadata ?? {}) as Record<string, string>;
  const parsed = uploadMetadataSchema.parse(m);
  return { ...parsed, uploaderId: m.uploaderId, uploaderName: m.uploaderName };
}

function trackerFor(
  ctx: AppContext,
  upload: { id: string; size?: number; offset?: number; metadata?: Record<string, string | null> | null },
): UploadTracker {
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

type FinishAnswer = { status_code: number; headers: Record<string, string>; body: string };

const refusalError = (r: IngestRefusal) => new HttpError(r.status, r.code, r.message, r.details);

/** The rules of the resumable uploads around the protocol handler (its hooks and events). */
class ResumableUploadService {
  readonly store: CaptureStore;
  private readonly layout;
  private readonly finishing = new Map<string, Promise<FinishAnswer>>();
  private readonly refused = new Map<string, { uploaderId: string; refusal: IngestRefusal }>();
  readonly followers: Followers;

  constructor(private readonly ctx: AppContext) {
    this.layout = storageLayout(ctx.env.dataDir);
    fs.mkdirSync(this.layout.tusDir, { recursive: true });
    const expiryMs = ctx.env.UPLOAD_EXPIRY_HOURS * 3600_000;
    this.store = new CaptureStore({ directory: this.layout.tusDir, expirationPeriodInMilliseconds: expiryMs });
    this.followers = new Followers(
      ctx,
      (id) => this.store.busy.has(id),
      (id, refusal) => this.refuseEarly(id, refusal),
    );
  }

  /** 404 unless the upload exists and this actor created it. */
  private async ownUpload(id: string, actor: Actor): Promise<StoredUploadInfo> {
    const info = ID.test(id) ? await this.store.info(id) : undefined;
    if (!info || info.metadata?.uploaderId !== actor.id)
      throw tusError(new HttpError(404, "not_found", "Upload not found."));
    return info;
  }

  async info(id: string, actor: Actor): Promise<StoredUploadInfo | undefined> {
    const info = ID.test(id) ? await this.store.info(id) : undefined;
    return info && info.metadata?.uploaderId === actor.id ? info : undefined;
  }

  /** A refusal found before the last byte: told to the sender's next request; nothing is kept. */
  private refuseEarly(id: string, refusal: IngestRefusal): void {
    void this.store.info(id).then((info) => {
      const uploaderId = String(info?.metadata?.uploaderId ?? "");
      this.refused.set(id, { uploaderId, refusal });
      setTimeout(() => this.refused.delete(id), REFUSAL_KEEP_MS).unref();
      uploadTracker(id)?.refused({ code: refusal.code, message: refusal.message });
      void this.store.remove(id).catch(() => {});
    });
  }

  private refusalFor(id: string, actor: Actor): IngestRefusal | undefined {
    const r = this.refused.get(id);
    return r && r.uploaderId === actor.id ? r.refusal : undefined;
  }

  follow(upload: Pick<Upload, "id" | "metadata">): void {
    if (this.refused.has(upload.id)) return;
    const m = metadataOf(upload);
    this.followers.start({ id: upload.id, encoding: m.encoding, settings: m.settings }, () => uploadTracker(upload.id));
  }

  /** The answer for an upload whose trace is stored (a sender that lost the first answer, or another node's). */
  private async doneAnswer(traceId: string): Promise<FinishAnswer> {
    const row = await getTraceRow(this.ctx, traceId);
    const body = JSON.stringify(row ? { trace: presentTrace(row) } : { trace: null });
    return { status_code: 200, headers: { "Content-Type": "application/json" }, body };
  }

  private async finish(upload: Upload, actor: Actor): Promise<FinishAnswer> {
    // one reader across nodes (./claims.ts)
    const claim = await claimUpload(this.ctx, upload.id);
    if (claim.state === "done") return this.doneAnswer(claim.traceId);
    if (claim.state === "elsewhere")
      throw tusError(
        new HttpError(409, "being_read", "This capture is being read on another server; ask again in a moment."),
      );
    try {
      return await this.finishClaimed(upload, actor, claim.onStore);
    } catch (err) {
      await claim.release();
      throw err;
    } finally {
      claim.stop();
    }
  }

  private async finishClaimed(upload: Upload, actor: Actor, onStore: OnStore): Promise<FinishAnswer> {
    const m = metadataOf(upload);
    const tracker = trackerFor(this.ctx, upload);
    const source = path.join(this.layout.tusDir, upload.id);
    this.store.busy.add(upload.id);
    const preread = this.followers.preread(
      { id: upload.id, encoding: m.encoding, settings: m.settings },
      upload.size ?? 0,
      tracker,
    );
    try {
      const row = await ingestTrace(
        this.ctx,
        actor,
        m.caseId,
        { path: source, encoding: m.encoding ?? "auto", originalName: m.filename },
        { settings: m.settings, name: m.name },
        tracker,
        preread,
        onStore,
      );
      await this.store.markDone(upload.id, row.id, this.ctx.now());
      await noteNewMaterial(this.ctx, m.caseId, actor.id);
      return {
        status_code: 200,
        headers: { "Content-Type": "application/json" },
        body: JSON.stringify({ trace: presentTrace(row) }),
      };
    } catch (err) {
      this.store.busy.delete(upload.id);
      if (err instanceof HttpError) {
        // a refused capture leaves nothing behind: the upload goes with it
        await this.store.remove(upload.id).catch(() => {});
        throw tusError(err);
      }
      this.ctx.logger.error({ err, uploadId: upload.id }, "resumable upload could not be stored");
      throw tusError(new HttpError(500, "internal", "The server could not store this capture. Try again."));
    } finally {
      this.store.busy.delete(upload.id);
      this.followers.done(upload.id);
    }
  }

  /** Reads a complete upload once, whoever asks first (its last PATCH, or a HEAD after a restart). */
  startFinish(upload: Upload, actor: Actor): Promise<FinishAnswer> {
    let p = this.finishing.get(upload.id);
    if (p) return p;
    p = this.finish(upload, actor);
    this.finishing.set(upload.id, p);
    void p.then(
      () => this.finishing.delete(upload.id),
      () => this.finishing.delete(upload.id),
    );
    return p;
  }

  async onIncomingRequest(req: object & { method: string }, id: string): Promise<void> {
    const actor = actorOf(req);
    if (req.method === "POST") return;
    const refusal = this.refusalFor(id, actor);
    if (refusal) throw tusError(refusalError(refusal));
    const info = await this.ownUpload(id, actor);
    if (req.method === "PATCH" && !info.done) {
      // the case may have been submitted or withdrawn since: stop taking bytes for it
      try {
        const caseId = String(info.metadata?.caseId);
        assertCanAddTrace(actor, await this.ctx.db.read((tx) => getCaseRow(tx, caseId)));
      } catch (err) {
        if (err instanceof HttpError) throw tusError(err);
        throw err;
      }
    }
    if (req.method === "HEAD" && !info.done && !this.store.busy.has(id) && !this.finishing.has(id))
      await this.onResume(info, actor);
  }

  /** A sender asks where to continue (tus HEAD). */
  private async onResume(info: StoredUploadInfo, actor: Actor): Promise<void> {
    const id = info.id;
    const offset = await fs.promises.stat(path.join(this.layout.tusDir, id)).then(
      (s) => s.size,
      () => 0,
    );
    const upload = new Upload({
      id,
      size: info.size,
      offset,
      metadata: info.metadata as Upload["metadata"],
      creation_date: info.creation_date,
    });
    if (info.size !== undefined && offset === info.size) {
      // every byte is in but it was never read (the server stopped while reading it): read it now
      void this.startFinish(upload, actor).catch(() => {});
      return;
    }
    const t = trackerFor(this.ctx, info);
    if (offset > 0 || t.stage === "interrupted") t.resuming(offset);
    // a follower lost (a restart): begin one now and tell it what is already there
    if (!this.followers.has(id)) {
      this.follow(upload);
      this.followers.grew(id, offset);
    }
  }

  async onUploadCreate(req: object, upload: Upload): Promise<{ metadata: Record<string, string> }> {
    const actor = actorOf(req);
    try {
      const m = parseWith(uploadMetadataSchema, upload.metadata ?? {}, "upload metadata");
      assertCanAddTrace(actor, await this.ctx.db.read((tx) => getCaseRow(tx, m.caseId)));
      const limit = this.ctx.env.MAX_TRACE_BYTES;
      if (m.fileBytes !== undefined && m.fileBytes > limit) {
        throw new HttpError(413, "too_large", `The file is over the ${Math.round(limit / 1048576)} MB limit.`);
      }
      const metadata: Record<string, string> = {};
      for (const [k, v] of Object.entries(upload.metadata ?? {})) {
        if (v != null && k in uploadMetadataSchema.shape) metadata[k] = v;
      }
      metadata.uploaderId = actor.id;
      metadata.uploaderName = actor.name;
      return { metadata };
    } catch (err) {
      if (err instanceof HttpError) throw tusError(err);
      throw err;
    }
  }

  async onUploadFinish(req: object, upload: Upload): Promise<FinishAnswer> {
    const actor = actorOf(req);
    const refusal = this.refusalFor(upload.id, actor);
    if (refusal) throw tusError(refusalError(refusal));
    if (!this.finishing.has(upload.id)) {
      const info = await this.store.info(upload.id);
      // the same answer again for a sender that lost the first one
      if (info?.done) return this.doneAnswer(info.done.traceId);
    }
    return this.startFinish(upload, actor);
  }

  /** Before the protocol handler sees a PATCH: the repeated length, and a drop noticed as it happens. */
  beforePatch(req: ExpressRequest, id: string): void {
    const started = Date.now();
    req.once("close", () => {
      // the link dropped part-way through this piece
      if (!req.complete && Date.now() - started > 0) uploadTracker(id)?.interrupted();
    });
  }

  /**
   * A client resuming a deferred-length upload declares the length again with its last piece (it
   * cannot know an interrupted piece already did): the same value changes nothing, so it is dropped.
   */
  async dropRepeatedLength(req: ExpressRequest, id: string): Promise<void> {
    const declared = req.headers["upload-length"];
    if (typeof declared !== "string" || !ID.test(id)) return;
    const info = await this.store.info(id);
    if (info?.size === undefined || String(info.size) !== declared.trim()) return;
    delete req.headers["upload-length"];
    // the protocol handler reads the raw header list too
    for (let i = req.rawHeaders.length - 2; i >= 0; i -= 2) {
      if (req.rawHeaders[i].toLowerCase() === "upload-length") req.rawHeaders.splice(i, 2);
    }
  }

  /** After a PATCH: whatever it brought is on disk now, and the follower may read up to there. */
  async afterPatch(id: string): Promise<void> {
    if (!ID.test(id)) return;
    const size = await fs.promises.stat(path.join(this.layout.tusDir, id)).then(
      (x) => x.size,
      () => null,
    );
    if (size !== null) this.followers.grew(id, size);
  }
}

export function createResumableUploads(ctx: AppContext): ResumableUploads {
  const service = new ResumableUploadService(ctx);
  const tus = new Server({
    path: RESUMABLE_UPLOAD_PATH,
    datastore: service.store,
    maxSize: ctx.env.MAX_TRACE_BYTES + 64 * 1024,
    relativeLocation: true,
    allowedOrigins: [],
    postReceiveInterval: 500,
    disableTerminationForFinishedUploads: true,
    namingFunction: () => crypto.randomUUID().replace(/-/g, ""),
    getFileIdFromRequest: (_req, lastPath) => (lastPath && ID.test(lastPath) ? lastPath : undefined),
    // a lock per process; across nodes the upload's claim (./claims.ts) decides who reads it
    locker: new MemoryLocker(),
    onIncomingRequest: (req, id) => service.onIncomingRequest(req, id),
    onUploadCreate: (req, upload) => service.onUploadCreate(req, upload),
    onUploadFinish: (req, upload) => service.onUploadFinish(req, upload),
    onResponseError(_req, err) {
      const e = err as { status_code?: number; body?: string };
      if (typeof e.status_code !== "number" || typeof e.body !== "string")
        ctx.logger.error({ err }, "resumable upload request failed");
      return undefined;
    },
  });

  tus.on(EVENTS.POST_CREATE, (_req, upload: Upload) => {
    trackerFor(ctx, upload).received(0);
    service.follow(upload);
  });
  tus.on(EVENTS.POST_RECEIVE, (_req, upload: Upload) => {
    const t = trackerFor(ctx, upload);
    if (upload.size !== undefined) t.declareTotal(upload.size);
    t.received(upload.offset);
    service.followers.grew(upload.id, upload.offset);
  });
  tus.on(EVENTS.POST_TERMINATE, (_req, _res, id: string) => {
    service.followers.stop(id);
    uploadTracker(id)?.cancelled();
  });

  return {
    store: service.store,
    info: (id, actor) => service.info(id, actor),
    async handle(req, res, actor) {
      (req as unknown as { [ACTOR]: Actor })[ACTOR] = actor;
      const id = path.basename(req.path);
      if (req.method === "PATCH") {
        service.beforePatch(req, id);
        await service.dropRepeatedLength(req, id);
      }
      await tus.handle(req, res);
      if (req.method === "PATCH") await service.afterPatch(id);
    },
  };
}
