/**
 * The mail outbox: requesting a mail writes one row (in the caller's transaction when one is
 * given, so the mail exists exactly when the change that caused it does); the dispatcher
 * (./dispatcher.ts) sends it after the request has been answered. These are the row operations;
 * every state change is a conditional update, so a row is claimed, marked sent or rescheduled by
 * one dispatcher only.
 */
import { and, asc, eq, inArray, lt, lte, sql } from "drizzle-orm";
import type { Db } from "../db/client";
import { schema } from "../db/client";

const { mailOutbox } = schema;

export type OutboxRow = typeof mailOutbox.$inferSelect;
/** The database or a transaction handle of it (what `db.transaction((tx) => …)` passes). */
export type MailWriter = Db | Parameters<Parameters<Db["transaction"]>[0]>[0];

export interface OutboxMail {
  to: string | string[];
  subject: string;
  text: string;
  html?: string;
  replyTo?: string;
}

export interface EnqueueOptions {
  /** write the row inside this transaction (it is sent only if the transaction commits) */
  tx?: MailWriter;
  /** what the mail is for, e.g. "reset_password" (default "mail") */
  kind?: string;
}

/** Writes one row per recipient and returns the ids. Synchronous, so it runs inside a transaction. */
export function enqueueMail(db: MailWriter, mail: OutboxMail, opts: { kind?: string; now?: Date } = {}): string[] {
  const now = opts.now ?? new Date();
  const recipients = ([] as string[])
    .concat(mail.to)
    .map((a) => a.trim())
    .filter(Boolean);
  if (recipients.length === 0) throw new Error("enqueueMail: no recipient");
  const rows = recipients.map((to) => ({
    id: crypto.randomUUID(),
    kind: opts.kind ?? "mail",
    toAddress: to,
    subject: mail.subject,
    textBody: mail.text,
    htmlBody: mail.html ?? null,
    replyTo: mail.replyTo ?? null,
    status: "pending" as const,
    attempts: 0,
    nextAttemptAt: now,
    createdAt: now,
  }));
  db.insert(mailOutbox).values(rows).run();
  return rows.map((r) => r.id);
}

/** Ids of rows due now, oldest first (pending ones, and `sending` ones whose claim has gone stale). */
export function dueRows(db: Db, now: Date, staleBefore: Date, limit: number): string[] {
  return db
    .select({ id: mailOutbox.id })
    .from(mailOutbox)
    .where(
      sql`(${mailOutbox.status} = 'pending' AND ${mailOutbox.nextAttemptAt} <= ${now.getTime()})
        OR (${mailOutbox.status} = 'sending' AND ${mailOutbox.claimedAt} < ${staleBefore.getTime()})`,
    )
    .orderBy(asc(mailOutbox.createdAt), asc(mailOutbox.id))
    .limit(limit)
    .all()
    .map((r) => r.id);
}

/**
 * Claims one row for `dispatcherId`: pending and due → sending. The update is conditional, so of
 * two dispatchers that try the same row exactly one gets `changes === 1` and sends it. A claim
 * older than `staleBefore` (its dispatcher died mid-send) may be taken over.
 */
export function claimRow(
  db: Db,
  id: string,
  dispatcherId: string,
  now: Date,
  staleBefore: Date,
): OutboxRow | undefined {
  const r = db
    .update(mailOutbox)
    .set({ status: "sending", claimedBy: dispatcherId, claimedAt: now, attempts: sql`${mailOutbox.attempts} + 1` })
    .where(
      and(
        eq(mailOutbox.id, id),
        sql`((${mailOutbox.status} = 'pending' AND ${mailOutbox.nextAttemptAt} <= ${now.getTime()})
          OR (${mailOutbox.status} = 'sending' AND ${mailOutbox.claimedAt} < ${staleBefore.getTime()}))`,
      ),
    )
    .run();
  if (r.changes !== 1) return undefined;
  return db.select().from(mailOutbox).where(eq(mailOutbox.id, id)).get();
}

/** Sent: only by the dispatcher holding the claim. The body (one-time links) is cleared. */
export function markSent(db: Db, id: string, dispatcherId: string, messageId: string, now: Date): boolean {
  const r = db
    .update(mailOutbox)
    .set({ status: "sent", sentAt: now, messageId, textBody: null, htmlBody: null, lastError: null })
    .where(and(eq(mailOutbox.id, id), eq(mailOutbox.status, "sending"), eq(mailOutbox.claimedBy, dispatcherId)))
    .run();
  return r.changes === 1;
}

/** A failed attempt: back to pending at `retryAt`, or given up (`failed`, body cleared) when retryAt is null. */
export function markFailed(db: Db, id: string, dispatcherId: string, error: string, retryAt: Date | null): boolean {
  const set =
    retryAt === null
      ? { status: "failed" as const, lastError: error, textBody: null, htmlBody: null, claimedBy: null }
      : { status: "pending" as const, lastError: error, nextAttemptAt: retryAt, claimedBy: null, claimedAt: null };
  const r = db
    .update(mailOutbox)
    .set(set)
    .where(and(eq(mailOutbox.id, id), eq(mailOutbox.status, "sending"), eq(mailOutbox.claimedBy, dispatcherId)))
    .run();
  return r.changes === 1;
}

/** Rows not yet sent or given up (pending or sending). */
export function unsentCount(db: Db): number {
  return db
    .select({ n: sql<number>`count(*)` })
    .from(mailOutbox)
    .where(inArray(mailOutbox.status, ["pending", "sending"]))
    .get()!.n;
}

/** The earliest time a pending row is due, or null. */
export function nextDueAt(db: Db): Date | null {
  const r = db
    .select({ t: sql<number | null>`min(${mailOutbox.nextAttemptAt})` })
    .from(mailOutbox)
    .where(eq(mailOutbox.status, "pending"))
    .get();
  return r?.t == null ? null : new Date(r.t);
}

/** Removes sent and given-up rows older than `before` (their bodies are already gone). */
export function pruneOutbox(db: Db, before: Date): number {
  return db
    .delete(mailOutbox)
    .where(and(inArray(mailOutbox.status, ["sent", "failed"]), lt(mailOutbox.createdAt, before)))
    .run().changes;
}

/** Pending rows due by `at` (for tests and the health view). */
export function pendingDueBy(db: Db, at: Date): number {
  return db
    .select({ n: sql<number>`count(*)` })
    .from(mailOutbox)
    .where(and(eq(mailOutbox.status, "pending"), lte(mailOutbox.nextAttemptAt, at)))
    .get()!.n;
}
