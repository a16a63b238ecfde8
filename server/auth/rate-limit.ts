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
 * Counts one request under `key` in a fixed window (the first request opens it, `max` pass, the
 * rest are refused until it closes), stored in the `rate_limit` table better-auth also uses.
 * Returns null when the request may pass, else the seconds until the window closes.
 */
export async function hitRateLimit(ctx: AppContext, key: string, rule: RateRule): Promise<number | null> {
  const now = ctx.now().getTime();
  const windowMs = rule.window * 1000;
  const [row] = await ctx.db.write((tx) =>
    tx.all<{ count: number; last_request: number }>(sql`
    INSERT INTO rate_limit (id, key, count, last_request) VALUES (${crypto.randomUUID()}, ${key}, 1, ${now})
    ON CONFLICT(key) DO UPDATE SET
      count = CASE WHEN ${now} - rate_limit.last_request >= ${windowMs} THEN 1 ELSE rate_limit.count + 1 END,
      last_request = CASE WHEN ${now} - rate_limit.last_request >= ${windowMs}
        THEN ${now} ELSE rate_limit.last_request END
    RETURNING count, last_request`),
  );
  if (row && Number(row.count) > rule.max)
    return Math.max(1, Math.ceil((Number(row.last_request) + windowMs - now) / 1000));
  return null;
}

export function rateLimited(retryAfter: number): HttpError {
  const message = `Too many attempts. Wait ${retryAfter} seconds, then try again.`;
  return new HttpError(429, "rate_limited", message, { retryAfterSeconds: retryAfter });
}

/**
 * Per-address rate limit for our own account routes (sign-up of a shop, expert application,
 * invitation acceptance), under keys of our own ("app|<ip>|<name>"). On in every environment.
 */
export function rateLimit(ctx: AppContext, name: string, rule: RateRule): RequestHandler {
  return (req, res, next) => {
    hitRateLimit(ctx, `app|${normaliseIp(req.ip ?? req.socket.remoteAddress)}|${name}`, rule).then((retryAfter) => {
      if (retryAfter === null) return next();
      res.setHeader("Retry-After", String(retryAfter));
      next(rateLimited(retryAfter));
    }, next);
  };
}
