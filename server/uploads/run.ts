import fs from "node:fs";
import type { Request, RequestHandler, Response } from "express";
import { HttpError } from "../http/errors";
import { releaseUpload } from "./multer";

/**
 * Runs a callback-style middleware (multer) as a promise inside an async route handler. A body
 * that is not well-formed multipart (busboy's errors: no boundary, no closing boundary, a bad part
 * header, a damaged gzip body) rejects as 400 `bad_upload`; multer's limits and our own refusals
 * as they are; disk faults as they are (500).
 */
export function runMiddleware(mw: RequestHandler, req: Request, res: Response): Promise<void> {
  return new Promise((resolve, reject) => {
    mw(req, res, (err?: unknown) => (err ? reject(malformedAsBadUpload(err)) : resolve()));
  });
}

function malformedAsBadUpload(err: unknown): unknown {
  const e = err as { name?: string; syscall?: string; message?: string } | null;
  if (err instanceof HttpError || e?.name === "MulterError" || e?.syscall) return err;
  return new HttpError(
    400,
    "bad_upload",
    `The multipart body could not be read (${e?.message ?? "malformed"}). ` +
      'Send multipart/form-data with a file field "file".',
  );
}

/** Removes the request's temp upload if it is still there (after a refusal, a failure, or a move). */
export async function discardUpload(req: Request): Promise<void> {
  const p = (req.file as Express.Multer.File | undefined)?.path;
  if (p) {
    await fs.promises.rm(p, { force: true }).catch(() => {});
    releaseUpload(p);
  }
}
