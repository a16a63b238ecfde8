import type { RequestHandler } from "express";
import { HttpError } from "./errors";

const SAFE = new Set(["GET", "HEAD", "OPTIONS"]);

/**
 * Refuses state-changing requests that a browser marks as coming from another site. Browsers send
 * `Sec-Fetch-Site` and `Origin` on every cross-site POST; non-browser clients send neither and are
 * authenticated by their session alone. Webhooks (signed by the sender) are exempt.
 */
export function crossSiteGuard(allowedOrigins: string[], exempt: (path: string) => boolean): RequestHandler {
  const allowed = new Set(allowedOrigins.map((o) => o.replace(/\/$/, "")));
  return (req, _res, next) => {
    if (SAFE.has(req.method) || exempt(req.path)) return next();
    const site = req.get("sec-fetch-site");
    const origin = req.get("origin");
    if (origin && origin !== "null" && !allowed.has(origin)) {
      return next(new HttpError(403, "cross_site", "Requests from another site are refused."));
    }
    if (origin === "null" || (site && site !== "same-origin" && site !== "none" && !(origin && allowed.has(origin)))) {
      return next(new HttpError(403, "cross_site", "Requests from another site are refused."));
    }
    next();
  };
}
