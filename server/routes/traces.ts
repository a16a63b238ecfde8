import fs from "node:fs";
import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { assertCanAddTrace, assertCanDeleteTrace, assertCanReadTrace } from "../auth/policies/traces";
import { badRequest, tooLarge } from "../http/errors";
import { parseParams, parseQuery, parseWith } from "../http/validate";
import { idParamSchema, traceUploadFieldsSchema, traceWindowQuerySchema } from "../../shared/schemas/traces";
import { getCaseRow, type CaseRow } from "../workflow/records";
import { noteNewMaterial } from "../workflow/commands/data";
import { viewableCase } from "../workflow/queries";
import { traceForWindow } from "../services/trace-access";
import { addTrace, deleteTrace, getTraceRow, originalFilePath, presentTrace, traceWindow, type TraceRow } from "../services/traces";
import { storageLayout } from "../services/storage";
import { singleFileUpload, sweepStaleUploads, uploadedFile } from "../uploads/multer";
import { discardUpload, runMiddleware } from "../uploads/run";
import { asciiName, pipeFile } from "./photos";

function mb(bytes: number): string {
  return bytes >= 1024 * 1024 ? `${Math.round(bytes / (1024 * 1024))} MB` : `${Math.round(bytes / 1024)} KB`;
}

/**
 * Traces: upload to a case (multipart `file` + `settings` JSON), metadata, min/max windows, the
 * original file, removal while draft. Another tenant's trace answers 404 like a missing one.
 */
export function traceRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();
  const layout = storageLayout(ctx.env.dataDir);
  fs.mkdirSync(layout.tempDir, { recursive: true });
  sweepStaleUploads(layout.tempDir);
  const upload = singleFileUpload({ tempDir: layout.tempDir, maxBytes: ctx.env.MAX_TRACE_BYTES, kind: "text" });

  /** The trace and its case, or 404 when either is missing or the actor may not see the case. */
  const loadReadable = async (actorCheck: (c: CaseRow | undefined) => void, id: string): Promise<TraceRow> => {
    const t = await getTraceRow(ctx, id);
    actorCheck(t ? await ctx.db.read((tx) => getCaseRow(tx, t.caseId)) : undefined);
    return t!;
  };

  r.post("/cases/:id/traces", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    // Authorized before the body is read: nobody streams 200 MB into a case they cannot change.
    assertCanAddTrace(actor, await ctx.db.read((tx) => getCaseRow(tx, id)));
    try {
      try {
        await runMiddleware(upload, req, res);
      } catch (err: any) {
        if (err?.name === "MulterError" && err.code === "LIMIT_FILE_SIZE") {
          throw tooLarge(`The trace file is over the ${mb(ctx.env.MAX_TRACE_BYTES)} limit.`);
        }
        throw err;
      }
      const file = uploadedFile(req);
      if (!file) throw badRequest("file_missing", 'Attach the scope export (CSV or TSV) in the field "file".');
      const fields = parseWith(traceUploadFieldsSchema, req.body ?? {}, "upload fields");
      const row = await addTrace(ctx, actor, id, file, fields);
      // A capture the expert asked for moves the case from needs_data back to the expert.
      await noteNewMaterial(ctx, id, actor.id);
      res.status(201).json(presentTrace(row));
    } finally {
      await discardUpload(req);
    }
  });

  r.get("/traces/:id", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    const t = await getTraceRow(ctx, id);
    await viewableCase(ctx, actor, t?.caseId ?? "", "Trace");
    res.json(presentTrace(t!));
  });

  /** The min/max window: the case's viewers, or readers of the casebook entry the trace was published with. */
  r.get("/traces/:id/window", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const q = parseQuery(traceWindowQuerySchema, req);
    const actor = await requireActor(req, auth);
    const t = await traceForWindow(ctx, actor, id);
    const w = await traceWindow(ctx, t, q);
    res.set("Cache-Control", "private, max-age=3600");
    res.json(w);
  });

  r.get("/traces/:id/original", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    const t = await loadReadable((c) => assertCanReadTrace(actor, c), id);
    const abs = originalFilePath(ctx, t);
    const stat = await fs.promises.stat(abs);
    const name = t.originalName ?? `${t.name}.csv`;
    const type = /\.tsv$/i.test(name) ? "text/tab-separated-values" : /\.csv$/i.test(name) ? "text/csv" : "text/plain";
    res.set({
      "Content-Type": type,
      "Content-Length": String(stat.size),
      "Content-Disposition": `attachment; filename="${asciiName(name)}"; filename*=UTF-8''${encodeURIComponent(name)}`,
      "X-Content-Type-Options": "nosniff",
      "Cache-Control": "private, no-store",
    });
    await pipeFile(abs, res);
  });

  r.delete("/traces/:id", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    const t = await loadReadable((c) => assertCanDeleteTrace(actor, c), id);
    await deleteTrace(ctx, actor, t);
    res.status(204).end();
  });

  return r;
}
