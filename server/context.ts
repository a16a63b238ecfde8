import type { Logger } from "pino";
import type Stripe from "stripe";
import type { Db } from "./db/client";
import type { Env } from "./env";
import type { EnqueueOptions, OutboxMail } from "./mail/outbox";
import type { Readiness } from "./readiness";

export type { EnqueueOptions, OutboxMail };

/**
 * Mail goes through the outbox (server/mail/): `send` and `enqueue` write a row (inside
 * `opts.tx` when given) and the dispatcher sends it after the request has been answered.
 */
export interface Mailer {
  /** Queues the mail; resolves with the outbox row id as `messageId`. */
  send(mail: OutboxMail, opts?: EnqueueOptions): Promise<{ messageId: string }>;
  /** The same (inside the unit `opts.tx` when given); returns the row ids. */
  enqueue(mail: OutboxMail, opts?: EnqueueOptions): Promise<string[]>;
  /** Resolves when every queued mail has been sent or given up (tests, shutdown). */
  drain(timeoutMs?: number): Promise<void>;
}

/** Pushes small "something changed" messages to socket rooms after a commit (set by the realtime layer). */
export interface Realtime {
  toCase(caseId: string, event: string, payload: unknown): void;
  toUser(userId: string, event: string, payload: unknown): void;
  /** drops every live connection of the user, on every node */
  disconnectUser(userId: string): void;
  /** drops the live connections opened with one session (sign-out), on every node */
  disconnectSession(sessionId: string): void;
}

/** The demo accounts shown on the sign-in page in demo mode (from the entry point; server/ never imports demo/). */
export interface DemoAccounts {
  password: string;
  signIns: { email: string; label: string }[];
}

/** What the entry point plugs in when DEMO is on: the accounts to show and the seed to run before being ready. */
export interface DemoPlugin extends DemoAccounts {
  seedIfEmpty(ctx: AppContext): Promise<boolean>;
}

/** Everything a route or service needs, built once in server/index.ts (or a test) and passed down. */
export interface AppContext {
  env: Env;
  db: Db;
  logger: Logger;
  mailer: Mailer;
  stripe: Stripe;
  realtime: Realtime;
  /** the clock; tests move it */
  now: () => Date;
  /** what must be in place before GET /api/health answers ready */
  readiness: Readiness;
  /** the demo accounts when DEMO is on and the entry point provided them */
  demo: DemoAccounts | null;
}

export const noRealtime: Realtime = { toCase() {}, toUser() {}, disconnectUser() {}, disconnectSession() {} };
