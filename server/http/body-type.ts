import type { RequestHandler } from "express";
import { unsupported } from "./errors";

/** A route that takes a body of another type than JSON (an upload, a raw webhook). */
export interface BodyTypeRule {
  method: string;
  /** matched against the path under the mount point, e.g. /cases/abc/traces */
  path: RegExp;
  /** media types as `req.is` takes them, e.g. "multipart/form-data" */
  types: readonly string[];
  /**
   * The route answers a body of the wrong type itself, with its own documented error: a multipart
   * route answers `400 bad_upload` for a body that is not multipart; the resumable-upload protocol
   * answers by its own rules (`application/offset+octet-stream` on PATCH, any type or none on POST).
   */
  routeDecides?: boolean;
}

/** The routes under /api whose bodies are not JSON. Add a line here for a new one. */
export const nonJsonBodies: readonly BodyTypeRule[] = [
  { method: "POST", path: /^\/cases\/[^/]+\/traces\/?$/, types: ["multipart/form-data"], routeDecides: true },
  { method: "POST", path: /^\/cases\/[^/]+\/photos\/?$/, types: ["multipart/form-data"], routeDecides: true },
  { method: "POST", path: /^\/uploads\/?$/, types: ["application/offset+octet-stream"], routeDecides: true },
  { method: "PATCH", path: /^\/uploads\/[^/]+\/?$/, types: ["application/offset+octet-stream"], routeDecides: true },
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
    if (rule?.routeDecides || req.is([...types])) return next();
    const said = req.headers["content-type"]
      ? `"${String(req.headers["content-type"]).split(";")[0]}"`
      : "a body without a type";
    next(unsupported(`This address takes ${types[0]}; the request sent ${said}.`));
  };
}
