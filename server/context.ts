import type { Logger } from "pino";
import type Stripe from "stripe";
import type { Db } from "./db/client";
import type { Env } from "./env";

export interface Mailer {
  send(mail: { to: string; subject: string; text: string; html?: string }): Promise<{ messageId: string }>;
}

/** Pushes small "something changed" messages to socket rooms after a commit (set by the realtime layer). */
export interface Realtime {
  toCase(caseId: string, event: string, payload: unknown): void;
  toUser(userId: string, event: string, payload: unknown): void;
  disconnectUser(userId: string): void;
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
}

export const noRealtime: Realtime = { toCase() {}, toUser() {}, disconnectUser() {} };
