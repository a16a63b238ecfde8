import type { RequestHandler } from "express";
import { unsupported } from "./errors";

/** A route that takes a body of another type than JSON (an upload, a raw webhook). */
export interface BodyTypeRule {
  method: string;
  /** matched against the path under the mount point, e.g. /cases/abc/traces */
  path: RegExp;
  /** media types as `req.is` takes them, e.g. "multipart/form-data"; none: the route checks the type itself */
  types: readonly string[];
}

/** The routes under /api whose bodies are not JSON. Add a line here for a new one. */
export const nonJsonBodies: readonly BodyTypeRule[] = [
  // the trace upload answers a body that is not multipart itself (400 bad_upload, after authorizing)
  { method: "POST", path: /^\/cases\/[^/]+\/traces\/?$/, types: [] },
  // resumable uploads (tus): the tus server checks its own types (application/offset+octet-stream)
  { method: "POST", path: /^\/uploads\/?$/, types: [] },
  { method: "PATCH", path: /^\/uploads\/[^/]+\/?$/, types: [] },
  { method: "POST", path: /^\/cases\/[^/]+\/photos\/?$/, types: ["multipart/form-data"] },
];

const hasBody = (headers: Record<string, string | string[] | undefined>) =>
  headers["transfer-encoding"] !== undefined ||
  (headers["content-length"] !== undefined && headers["content-length"] !== "0");

/**
 * 415 `unsupported_type` for a request whose body is not the type its route takes: JSON everywhere
 * (application/json, what the JSON parser reads), except the routes listed in `nonJsonBodies`. A request with no
 * body at all passes (e.g. a claim or a withdraw), so does every GET/HEAD/OPTIONS. Runs before any
 * body parser, so a refused body is never read, let alone acted on.
 */
export function requireBodyType(rules: readonly BodyTypeRule[] = nonJsonBodies): RequestHandler {
  return (req, _res, next) => {
    if (req.method === "GET" || req.method === "HEAD" || req.method === "OPTIONS" || !hasBody(req.headers))
      return next();
    const rule = rules.find((r) => r.method === req.method && r.path.test(req.path));
    const types = rule ? rule.types : ["application/json"];
    if (types.length === 0 || req.is([...types])) return next();
    const said = req.headers["content-type"]
      ? `"${String(req.headers["content-type"]).split(";")[0]}"`
      : "a body without a type";
    next(unsupported(`This address takes ${types[0]}; the request sent ${said}.`));
  };
}
