import fs from "node:fs";
import zlib from "node:zlib";
import { pipeline } from "node:stream/promises";
import { Router, type NextFunction, type Request, type Response } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor, type Actor } from "../auth/session";
import { assertCanAddTrace, assertCanReadTrace } from "../auth/policies/traces";
import { badRequest, notFound } from "../http/errors";
import { parseParams, parseWith } from "../http/validate";
import { idParamSchema, traceUploadFieldsSchema } from "../../shared/schemas/traces";
import type { UploadStatusResponse } from "../../shared/schemas/uploads";
import { getCaseRow } from "../workflow/records";
import { noteNewMaterial } from "../workflow/commands/data";
import { viewableCase } from "../workflow/queries";
import { getTraceRow, originalFilePath, originalIsCompressed, presentTrace } from "../services/traces";
import { storageLayout } from "../services/storage";
import { multipartFailure, singleFileUpload, uploadedFile } from "../uploads/multer";
import { discardUpload, runMiddleware } from "../uploads/run";
import { ingestTrace } from "../uploads/pipeline";
import { activeUploads, trackUpload, uploadTracker } from "../uploads/progress";
import { createResumableUploads } from "../uploads/tus";
import { asciiName, pipeFile } from "./photos";

function mb(bytes: number): string {
  return bytes >= 1024 * 1024 ? `${Math.round(bytes / (1024 * 1024))} MB` : `${Math.round(bytes / 1024)} KB`;
}

/**
 * Capture uploads: resumable (tus at /api/uploads, what the browser uses), multipart (API
 * clients: `file` + `settings` JSON, plain or gzip), where an upload stands, and the original
 * file as the user sent it. Both ways in share one pipeline once the bytes have arrived.
 */
export function uploadRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();
  const layout = storageLayout(ctx.env.dataDir);
  fs.mkdirSync(layout.tempDir, { recursive: true });
  const upload = singleFileUpload({ tempDir: layout.tempDir, maxBytes: ctx.env.MAX_TRACE_BYTES, kind: "trace" });
  const resumable = createResumableUploads(ctx);

  r.post("/cases/:id/traces", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    // Authorized before the body is read: nobody streams 200 MB into a case they cannot change.
    assertCanAddTrace(actor, await ctx.db.read((tx) => getCaseRow(tx, id)));
    if (!req.is("multipart/form-data")) {
      throw badRequest(
        "bad_upload",
        'Send the capture as multipart/form-data with the file in the field "file" (or use the resumable uploads).',
      );
    }
    try {
      try {
        await runMiddleware(upload, req, res);
      } catch (err) {
        throw multipartFailure(err, mb(ctx.env.MAX_TRACE_BYTES));
      }
      const file = uploadedFile(req);
      if (!file)
        throw badRequest("file_missing", 'Attach the scope export (CSV or TSV, plain or gzip) in the field "file".');
      const fields = parseWith(traceUploadFieldsSchema, req.body ?? {}, "upload fields");
      const gzip = file.detected === "gzip";
      const tracker = trackUpload(ctx, {
        uploadId: crypto.randomUUID().replace(/-/g, ""),
        caseId: id,
        name: file.originalname,
        by: { userId: actor.id, name: actor.name },
        compressed: gzip,
        fileBytes: null,
        totalBytes: file.size,
        receivedBytes: file.size,
      });
      const row = await ingestTrace(
        ctx,
        actor,
        id,
        { path: file.path, encoding: gzip ? "gzip" : "identity", originalName: file.originalname },
        fields,
        tracker,
      );
      // A capture the expert asked for moves the case from needs_data back to the expert.
      await noteNewMaterial(ctx, id, actor.id);
      await discardUpload(req); // gone before the answer, not just after it
      res.status(201).json(presentTrace(row));
    } finally {
      await discardUpload(req);
    }
  });

  // Resumable uploads (tus 1.0.0). GET is ours (the status below), never the protocol's.
  const tusRoute = async (req: Request, res: Response, next: NextFunction) => {
    if (req.method === "GET") return next();
    const actor = req.method === "OPTIONS" ? (null as unknown as Actor) : await requireActor(req, auth);
    await resumable.handle(req, res, actor);
  };
  r.all("/uploads", tusRoute);
  r.all("/uploads/:id", tusRoute);

  r.get("/uploads/:id", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    const info = await resumable.info(id, actor);
    const t = uploadTracker(id);
    if (!info && !(t && t.snapshot().by.userId === actor.id)) throw notFound("Upload");
    const s = t?.snapshot();
    const size = info?.size ?? s?.totalBytes ?? null;
    const received = info?.done
      ? (size ?? 0)
      : (s?.receivedBytes ??
        (await fs.promises.stat(`${layout.tusDir}/${id}`).then(
          (x) => x.size,
          () => 0,
        )));
    const body: UploadStatusResponse = {
      id,
      caseId: s?.caseId ?? String(info?.metadata?.caseId ?? ""),
      stage: info?.done ? "stored" : (s?.stage ?? "interrupted"),
      receivedBytes: received,
      totalBytes: size,
      queuePosition: s?.queuePosition ?? null,
      fraction: s?.fraction ?? null,
      traceId: info?.done?.traceId ?? s?.traceId ?? null,
      error: s?.error ?? null,
    };
    res.set("Cache-Control", "no-store").json(body);
  });

  /** The uploads of a case under way right now (a screen opened mid-upload starts from these). */
  r.get("/cases/:id/uploads", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    await viewableCase(ctx, actor, id, "Case");
    res.set("Cache-Control", "no-store").json({ caseId: id, uploads: activeUploads(id) });
  });

  r.get("/traces/:id/original", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    const t = await getTraceRow(ctx, id);
    assertCanReadTrace(actor, t ? await ctx.db.read((tx) => getCaseRow(tx, t.caseId)) : undefined);
    const abs = originalFilePath(ctx, t!);
    const stat = await fs.promises.stat(abs);
    const name = t!.originalName ?? `${t!.name}.csv`;
    const sentGzip = /\.gz$/i.test(name);
    const plainName = name.replace(/\.gz$/i, "");
    const type = sentGzip
      ? "application/gzip"
      : /\.tsv$/i.test(plainName)
        ? "text/tab-separated-values"
        : /\.csv$/i.test(plainName)
          ? "text/csv"
          : "text/plain";
    res.set({
      "Content-Type": type,
      "Content-Disposition": `attachment; filename="${asciiName(name)}"; filename*=UTF-8''${encodeURIComponent(name)}`,
      "X-Content-Type-Options": "nosniff",
      "Cache-Control": "private, no-store",
      Vary: "Accept-Encoding",
    });
    // Stored gzip-compressed. A file the user sent as .gz goes back as that file; a plain file
    // goes back plain: compressed in transit when the client takes gzip, else inflated here.
    if (!originalIsCompressed(t!) || sentGzip) {
      res.set("Content-Length", String(stat.size));
      return pipeFile(abs, res);
    }
    if (req.acceptsEncodings("gzip") === "gzip") {
      res.set({ "Content-Encoding": "gzip", "Content-Length": String(stat.size) });
      return pipeFile(abs, res);
    }
    res.set("Content-Length", String(t!.originalBytes));
    await pipeline(fs.createReadStream(abs), zlib.createGunzip(), res);
  });

  return r;
}
