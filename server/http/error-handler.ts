import type { ErrorRequestHandler, RequestHandler } from "express";
import { ZodError } from "zod";
import { HttpError } from "./errors";
import { zodIssues } from "./validate";
import { TransactionTimeoutError } from "../db/unit-of-work";

export const notFoundHandler: RequestHandler = (req, res) => {
  res.status(404).json({ error: { code: "not_found", message: `No such endpoint: ${req.method} ${req.path}` } });
};

/** Every 4xx/5xx answers `{ error: { code, message, details? } }`; never a stack trace. */
export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  let status = 500;
  let body: { code: string; message: string; details?: unknown } = {
    code: "internal",
    message: "Something went wrong on our side. Try again; if it keeps failing, tell the desk.",
  };
  if (err instanceof HttpError) {
    status = err.status;
    body = { code: err.code, message: err.message, ...(err.details !== undefined ? { details: err.details } : {}) };
  } else if (err instanceof ZodError) {
    status = 400;
    body = { code: "validation_failed", message: "Check the input.", details: { fields: zodIssues(err) } };
  } else if (err?.type === "entity.parse.failed") {
    status = 400;
    body = { code: "malformed_json", message: "The request body is not valid JSON." };
  } else if (err?.type === "entity.too.large") {
    status = 413;
    body = { code: "too_large", message: "The request body is too large." };
  } else if (err?.name === "MulterError") {
    if (err.code === "LIMIT_FILE_SIZE") {
      status = 413;
      body = {
        code: "too_large",
        message: `The file is over the size limit${err.field ? ` for "${err.field}"` : ""}.`,
      };
    } else {
      status = 400;
      body = { code: "bad_upload", message: `Upload refused: ${err.message}` };
    }
  } else if (err instanceof TransactionTimeoutError) {
    // the libSQL server took the unit's write lock back: nothing of it was stored (docs/api.md)
    status = 503;
    body = {
      code: "database_busy",
      message: "The database was too busy to finish this; nothing was saved. Try again.",
    };
    res.set("Retry-After", "1");
  } else if (typeof err?.status === "number" && err.status >= 400 && err.status < 500) {
    status = err.status;
    body = { code: "bad_request", message: String(err.expose ? err.message : "Bad request.") };
  }
  // pino-http sets req.log; an app built without it (some tests) has none
  if (status >= 500) req.log?.error({ err }, "request failed");
  if (res.headersSent) return;
  res.status(status).json({ error: body });
};
