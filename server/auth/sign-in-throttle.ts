/**
 * Sign-in throttling, in front of better-auth's `/sign-in/email`, kept in the `rate_limit` table
 * under keys of our own:
 *
 * - Per client address: at most ADDRESS_RULE.max *failed* sign-ins per window; then 429
 *   `rate_limited` until the window closes. Successful sign-ins do not count, so a person switching
 *   between accounts (the four demo accounts in development) never meets it.
 * - Per account (the e-mail address as typed, known or not, so the answers do not reveal which
 *   addresses are registered): after ACCOUNT_FREE_FAILURES failures in a row, each further attempt
 *   must wait a delay that doubles from 2 s up to 15 min (429 `sign_in_delayed` with Retry-After)
 *   — a growing delay, never a lockout: the right password works once the delay is over, and a
 *   success starts the count afresh. Failures older than a day are forgotten. When the run of
 *   failures reaches the threshold, the account's owner is mailed (once per run).
 *
 * An attempt reserves its place before the password is checked (the counters are updated in the
 * same write unit that reads them, on whichever node the attempt arrives), so simultaneous attempts are counted one by one;
 * an attempt that ends neither in a wrong password nor in a success gives its place back.
 */
import { createHash } from "node:crypto";
import { sql } from "drizzle-orm";
import type { AppContext } from "../context";
import type { Tx } from "../db/client";

export const ADDRESS_RULE = { window: 60, max: 5 } as const;
export const ACCOUNT_FREE_FAILURES = 6;
export const ACCOUNT_BASE_DELAY_S = 2;
export const ACCOUNT_MAX_DELAY_S = 15 * 60;
export const ACCOUNT_FORGET_AFTER_S = 24 * 3600;

export type Refusal = { scope: "address" | "account"; retryAfter: number };
export type Outcome = "success" | "failure" | "other";

export interface Reservation {
  /** Records how the attempt ended; returns true when this failure is the one to tell the owner about. */
  settle(outcome: Outcome): Promise<{ notifyOwner: boolean }>;
}

/** The wait, in seconds, before attempt number failures+1 once `failures` have failed in a row. */
export function accountDelaySeconds(failures: number): number {
  if (failures < ACCOUNT_FREE_FAILURES) return 0;
  return Math.min(ACCOUNT_MAX_DELAY_S, ACCOUNT_BASE_DELAY_S * 2 ** (failures - ACCOUNT_FREE_FAILURES));
}

const accountKey = (email: string) =>
  `signin-account|${createHash("sha256").update(email.trim().toLowerCase()).digest("hex")}`;
const addressKey = (ip: string) => `signin-address|${ip}`;

interface Row {
  count: number;
  last_request: number;
}

/**
 * Checks both limits for one attempt and, when it may go ahead, reserves it. Returns the refusal
 * (with the seconds to wait) or the reservation to settle once the attempt's outcome is known.
 */
export async function reserveSignIn(ctx: AppContext, ip: string, email: string): Promise<Refusal | Reservation> {
  const now = ctx.now().getTime();
  const aKey = addressKey(ip);
  const kKey = accountKey(email);
  // (all, not get: drizzle's libSQL driver fails a raw get that finds no row)
  const read = async (tx: Tx, key: string): Promise<Row | undefined> =>
    (await tx.all<Row>(sql`SELECT count, last_request FROM rate_limit WHERE key = ${key}`))[0];
  const write = (tx: Tx, key: string, count: number, last: number) =>
    tx.run(sql`INSERT INTO rate_limit (id, key, count, last_request)
        VALUES (${crypto.randomUUID()}, ${key}, ${count}, ${last})
      ON CONFLICT(key) DO UPDATE SET count = excluded.count, last_request = excluded.last_request`);

  type Decision = Refusal | { failures: number; addressStart: number };
  const decided = await ctx.db.write(async (tx): Promise<Decision> => {
    const windowMs = ADDRESS_RULE.window * 1000;
    let address = await read(tx, aKey);
    if (address && now - Number(address.last_request) >= windowMs) address = undefined;
    if (address && Number(address.count) >= ADDRESS_RULE.max) {
      return {
        scope: "address" as const,
        retryAfter: Math.max(1, Math.ceil((Number(address.last_request) + windowMs - now) / 1000)),
      };
    }
    let account = await read(tx, kKey);
    if (account && now - Number(account.last_request) >= ACCOUNT_FORGET_AFTER_S * 1000) account = undefined;
    const failures = Number(account?.count ?? 0);
    const wait = accountDelaySeconds(failures) * 1000;
    if (account && wait > 0 && now < Number(account.last_request) + wait) {
      return {
        scope: "account" as const,
        retryAfter: Math.max(1, Math.ceil((Number(account.last_request) + wait - now) / 1000)),
      };
    }
    const addressStart = address ? Number(address.last_request) : now;
    await write(tx, aKey, Number(address?.count ?? 0) + 1, addressStart);
    await write(tx, kKey, failures + 1, now);
    return { failures: failures + 1, addressStart };
  });
  if ("scope" in decided) return decided;
  const { failures, addressStart } = decided;
  // now and then, forget what no rule looks at any more (addresses typed once, old runs of failures)
  if (Math.random() < 0.01) {
    const before = now - ACCOUNT_FORGET_AFTER_S * 1000;
    await ctx.db.write((tx) =>
      tx.run(sql`DELETE FROM rate_limit WHERE key LIKE 'signin-%' AND last_request < ${before}`),
    );
  }

  let settled = false;
  return {
    async settle(outcome) {
      if (settled) return { notifyOwner: false };
      settled = true;
      await ctx.db.write(async (tx) => {
        // the address counts failures only
        if (outcome !== "failure")
          await tx.run(
            sql`UPDATE rate_limit SET count = MAX(0, count - 1)
                WHERE key = ${aKey} AND last_request = ${addressStart}`,
          );
        if (outcome === "success") await tx.run(sql`DELETE FROM rate_limit WHERE key = ${kKey}`);
        else if (outcome === "other")
          await tx.run(sql`UPDATE rate_limit SET count = MAX(0, count - 1) WHERE key = ${kKey}`);
      });
      return { notifyOwner: outcome === "failure" && failures === ACCOUNT_FREE_FAILURES };
    },
  };
}
