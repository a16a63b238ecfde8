import fs from "node:fs";
import { Router, type Response } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { assertCaseAction } from "../auth/policies/cases";
import { noteNewMaterial } from "../workflow/commands/data";
import { viewableCase } from "../workflow/queries";
import { badRequest } from "../http/errors";
import { parseParams } from "../http/validate";
import { idParamSchema } from "../../shared/schemas/traces";
import { getCaseRow } from "../workflow/records";
import { addPhoto, deletePhoto, getPhotoRow, photoFilePath, presentPhoto } from "../services/photos";
import { storageLayout } from "../services/storage";
import { singleFileUpload, uploadedFile } from "../uploads/multer";
import { discardUpload, runMiddleware } from "../uploads/run";
import type { ImageMime } from "../uploads/magic";

/**
 * Photos of a case: JPEG, PNG or WebP up to MAX_PHOTO_BYTES, recognised by their first bytes.
 * The case is checked before the body is read, so nobody uploads to a case they cannot change.
 */
export function photoRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();
  const layout = storageLayout(ctx.env.dataDir);
  const upload = singleFileUpload({ tempDir: layout.tempDir, maxBytes: ctx.env.MAX_PHOTO_BYTES, kind: "image" });

  r.post("/cases/:id/photos", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    assertCaseAction(actor, await ctx.db.read((tx) => getCaseRow(tx, id)), "addPhoto");
    try {
      await runMiddleware(upload, req, res);
      const file = uploadedFile(req);
      if (!file) throw badRequest("file_missing", 'Attach the photo in the field "file".');
      const row = await addPhoto(ctx, actor, id, file as typeof file & { detected: ImageMime });
      await noteNewMaterial(ctx, id, actor.id);
      res.status(201).json(presentPhoto(row));
    } finally {
      await discardUpload(req);
    }
  });

  r.get("/photos/:id", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    const p = await getPhotoRow(ctx, id);
    await viewableCase(ctx, actor, p?.caseId ?? "", "Photo");
    const abs = photoFilePath(ctx, p!);
    const stat = await fs.promises.stat(abs);
    res.set({
      "Content-Type": p!.mime,
      "Content-Length": String(stat.size),
      "X-Content-Type-Options": "nosniff",
      "Content-Disposition": `inline; filename="${asciiName(p!.name)}"; filename*=UTF-8''${encodeURIComponent(p!.name)}`,
      "Cache-Control": "private, max-age=3600",
      "Content-Security-Policy": "default-src 'none'; sandbox",
    });
    await pipeFile(abs, res);
  });

  r.delete("/photos/:id", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    const p = await getPhotoRow(ctx, id);
    const c = p ? await ctx.db.read((tx) => getCaseRow(tx, p.caseId)) : undefined;
    assertCaseAction(actor, c, "deletePhoto", "Photo");
    await deletePhoto(ctx, actor, p!);
    res.status(204).end();
  });

  return r;
}

/** A file name safe inside a quoted header parameter. */
export function asciiName(name: string): string {
  return name.replace(/[^\x20-\x7e]/g, "_").replace(/["\\]/g, "_");
}

/** Streams a file to the response; errors before the first byte go to the error handler. */
export function pipeFile(abs: string, res: Response): Promise<void> {
  return new Promise((resolve, reject) => {
    const s = fs.createReadStream(abs);
    s.on("error", (err) => {
      if (!res.headersSent) reject(err);
      else {
        res.destroy(err);
        resolve();
      }
    });
    s.on("end", () => resolve());
    s.pipe(res);
  });
}
