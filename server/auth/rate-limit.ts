import type { RequestHandler } from "express";
import { sql } from "drizzle-orm";
import type { AppContext } from "../context";
import { HttpError } from "../http/errors";
import { normaliseIp } from "./client-ip";

export interface RateRule {
  /** seconds */
  window: number;
  max: number;
}

/**
 * Per-address rate limit for our own account routes (sign-up of a shop, expert application,
 * invitation acceptance), stored in the same `rate_limit` table better-auth uses for its endpoints,
 * under keys of our own ("app|<ip>|<name>"). On in every environment. A fixed window: the first
 * request opens it, `max` requests pass, the rest answer 429 until it closes.
 */
export function rateLimit(ctx: AppContext, name: string, rule: RateRule): RequestHandler {
  return (req, res, next) => {
    const key = `app|${normaliseIp(req.ip ?? req.socket.remoteAddress)}|${name}`;
    const now = ctx.now().getTime();
    const windowMs = rule.window * 1000;
    const row = ctx.db.get<{ count: number; last_request: number }>(sql`
      INSERT INTO rate_limit (id, key, count, last_request) VALUES (${crypto.randomUUID()}, ${key}, 1, ${now})
      ON CONFLICT(key) DO UPDATE SET
        count = CASE WHEN ${now} - rate_limit.last_request >= ${windowMs} THEN 1 ELSE rate_limit.count + 1 END,
        last_request = CASE WHEN ${now} - rate_limit.last_request >= ${windowMs} THEN ${now} ELSE rate_limit.last_request END
      RETURNING count, last_request`);
    if (row && row.count > rule.max) {
      const retryAfter = Math.max(1, Math.ceil((row.last_request + windowMs - now) / 1000));
      res.setHeader("Retry-After", String(retryAfter));
      return next(new HttpError(429, "rate_limited", `Too many attempts. Wait ${retryAfter} seconds, then try again.`, { retryAfterSeconds: retryAfter }));
    }
    next();
  };
}
