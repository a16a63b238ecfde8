/**
 * The mail outbox: requesting a mail writes one row (in the caller's transaction when one is
 * given, so the mail exists exactly when the change that caused it does); the dispatcher
 * (./dispatcher.ts) sends it after the request has been answered. These are the row operations;
 * every state change is a conditional update, so a row is claimed, marked sent or rescheduled by
 * one dispatcher only.
 */
import { and, asc, eq, inArray, lt, lte, sql } from "drizzle-orm";
import type { Tx } from "../db/client";
import { schema } from "../db/client";

const { mailOutbox } = schema;

export type OutboxRow = typeof mailOutbox.$inferSelect;
/** A unit's handle (what `db.write(async (tx) => …)` passes). */
export type MailWriter = Tx;

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

/** Writes one row per recipient (inside the caller's unit) and returns the ids. */
export async function enqueueMail(
  tx: Tx,
  mail: OutboxMail,
  opts: { kind?: string; now?: Date } = {},
): Promise<string[]> {
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
  await tx.insert(mailOutbox).values(rows).run();
  return rows.map((r) => r.id);
}

/** Ids of rows due now, oldest first (pending ones, and `sending` ones whose claim has gone stale). */
export async function dueRows(tx: Tx, now: Date, staleBefore: Date, limit: number): Promise<string[]> {
  const rows = await tx
    .select({ id: mailOutbox.id })
    .from(mailOutbox)
    .where(
      sql`(${mailOutbox.status} = 'pending' AND ${mailOutbox.nextAttemptAt} <= ${now.getTime()})
        OR (${mailOutbox.status} = 'sending' AND ${mailOutbox.claimedAt} < ${staleBefore.getTime()})`,
    )
    .orderBy(asc(mailOutbox.createdAt), asc(mailOutbox.id))
    .limit(limit)
    .all();
  return rows.map((r) => r.id);
}

/**
 * Claims one row for `dispatcherId`: pending and due → sending. The update is conditional, so of
 * two dispatchers that try the same row (on one node or several) exactly one gets the row back
 * and sends it. A claim older than `staleBefore` (its dispatcher died mid-send) may be taken over.
 */
export async function claimRow(
  tx: Tx,
  id: string,
  dispatcherId: string,
  now: Date,
  staleBefore: Date,
): Promise<OutboxRow | undefined> {
  return tx
    .update(mailOutbox)
    .set({ status: "sending", claimedBy: dispatcherId, claimedAt: now, attempts: sql`${mailOutbox.attempts} + 1` })
    .where(
      and(
        eq(mailOutbox.id, id),
        sql`((${mailOutbox.status} = 'pending' AND ${mailOutbox.nextAttemptAt} <= ${now.getTime()})
          OR (${mailOutbox.status} = 'sending' AND ${mailOutbox.claimedAt} < ${staleBefore.getTime()}))`,
      ),
    )
    .returning()
    .get();
}

/** Sent: only by the dispatcher holding the claim. The body (one-time links) is cleared. */
export async function markSent(
  tx: Tx,
  id: string,
  dispatcherId: string,
  messageId: string,
  now: Date,
): Promise<boolean> {
  const r = await tx
    .update(mailOutbox)
    .set({ status: "sent", sentAt: now, messageId, textBody: null, htmlBody: null, lastError: null })
    .where(and(eq(mailOutbox.id, id), eq(mailOutbox.status, "sending"), eq(mailOutbox.claimedBy, dispatcherId)))
    .returning({ id: mailOutbox.id })
    .all();
  return r.length === 1;
}

/** A failed attempt: back to pending at `retryAt`, or given up (`failed`, body cleared) when retryAt is null. */
export async function markFailed(
  tx: Tx,
  id: string,
  dispatcherId: string,
  error: string,
  retryAt: Date | null,
): Promise<boolean> {
  const set =
    retryAt === null
      ? { status: "failed" as const, lastError: error, textBody: null, htmlBody: null, claimedBy: null }
      : { status: "pending" as const, lastError: error, nextAttemptAt: retryAt, claimedBy: null, claimedAt: null };
  const r = await tx
    .update(mailOutbox)
    .set(set)
    .where(and(eq(mailOutbox.id, id), eq(mailOutbox.status, "sending"), eq(mailOutbox.claimedBy, dispatcherId)))
    .returning({ id: mailOutbox.id })
    .all();
  return r.length === 1;
}

/** Rows not yet sent or given up (pending or sending). */
export async function unsentCount(tx: Tx): Promise<number> {
  const r = await tx
    .select({ n: sql<number>`count(*)` })
    .from(mailOutbox)
    .where(inArray(mailOutbox.status, ["pending", "sending"]))
    .get();
  return Number(r?.n ?? 0);
}

/** The earliest time a pending row is due, or null. */
export async function nextDueAt(tx: Tx): Promise<Date | null> {
  const r = await tx
    .select({ t: sql<number | null>`min(${mailOutbox.nextAttemptAt})` })
    .from(mailOutbox)
    .where(eq(mailOutbox.status, "pending"))
    .get();
  return r?.t == null ? null : new Date(Number(r.t));
}

/** Removes sent and given-up rows older than `before` (their bodies are already gone). */
export async function pruneOutbox(tx: Tx, before: Date): Promise<number> {
  const gone = await tx
    .delete(mailOutbox)
    .where(and(inArray(mailOutbox.status, ["sent", "failed"]), lt(mailOutbox.createdAt, before)))
    .returning({ id: mailOutbox.id })
    .all();
  return gone.length;
}

/** Pending rows due by `at` (for tests and the health view). */
export async function pendingDueBy(tx: Tx, at: Date): Promise<number> {
  const r = await tx
    .select({ n: sql<number>`count(*)` })
    .from(mailOutbox)
    .where(and(eq(mailOutbox.status, "pending"), lte(mailOutbox.nextAttemptAt, at)))
    .get();
  return Number(r?.n ?? 0);
}
