import fs from "node:fs";
import type { Request, RequestHandler, Response } from "express";
import { releaseUpload } from "./multer";

/** Runs a callback-style middleware (multer) as a promise inside an async route handler. */
export function runMiddleware(mw: RequestHandler, req: Request, res: Response): Promise<void> {
  return new Promise((resolve, reject) => {
    mw(req, res, (err?: unknown) => (err ? reject(err) : resolve()));
  });
}

/** Removes the request's temp upload if it is still there (after a refusal, a failure, or a move). */
export async function discardUpload(req: Request): Promise<void> {
  const p = (req.file as Express.Multer.File | undefined)?.path;
  if (p) {
    await fs.promises.rm(p, { force: true }).catch(() => {});
    releaseUpload(p);
  }
}
