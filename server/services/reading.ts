/**
 * How far each reader has read a case's live record (chat and marks share one per-case seq), for
 * the unread counts of the case lists. A reader has read up to the head of the record when they
 * join the case's live review, while they are in it (every write moves the mark of everybody in
 * the room), and when their client says so (POST /api/cases/:id/seen). Reading also marks their
 * notices about new messages and marks on that case as read.
 */
import { and, eq, inArray, isNull, sql } from "drizzle-orm";
import type { AppContext } from "../context";
import type { Actor } from "../auth/session";
import { schema, type Db, type SyncTx, type Tx } from "../db/client";
import { authorizeRead } from "../workflow/policy";
import { getCaseRow } from "../workflow/records";
import type { SeenView } from "../../shared/views/desk";

const { caseReader, caseSeq, notification } = schema;
type SyncDb = Db | SyncTx;

/** The kinds of notice that reading the live record answers. */
const LIVE_NOTICES = ["new_message", "new_mark"];

function upsertSeen(db: SyncDb | Tx, caseId: string, userIds: readonly string[], seq: number, at: Date) {
  return (db as Tx)
    .insert(caseReader)
    .values(userIds.map((userId) => ({ caseId, userId, seenSeq: seq, seenAt: at })))
    .onConflictDoUpdate({
      target: [caseReader.caseId, caseReader.userId],
      set: { seenSeq: sql`max(${caseReader.seenSeq}, excluded.seen_seq)`, seenAt: at },
    })
    .run();
}

function readLiveNotices(db: SyncDb | Tx, caseId: string, userIds: readonly string[], at: Date) {
  return (db as Tx)
    .update(notification)
    .set({ readAt: at })
    .where(
      and(
        inArray(notification.userId, [...userIds]),
        eq(notification.caseId, caseId),
        inArray(notification.kind, LIVE_NOTICES),
        isNull(notification.readAt),
      ),
    )
    .returning({ id: notification.id })
    .all();
}

/**
 * The live layer's step (synchronous, inside its transaction): these users have read the case up
 * to `seq`; their notices about new messages and marks on it are read.
 */
export function markSeenIn(db: SyncDb, caseId: string, userIds: readonly string[], seq: number, at: Date): void {
  const ids = [...new Set(userIds)];
  if (ids.length === 0) return;
  upsertSeen(db, caseId, ids, seq, at);
  readLiveNotices(db, caseId, ids, at);
}

/** POST /api/cases/:id/seen: the case's readers (404 for anybody else, as for a missing case). */
export async function markCaseSeen(ctx: AppContext, actor: Actor, caseId: string): Promise<SeenView> {
  const now = ctx.now();
  return ctx.db.write(async (tx) => {
    const c = await getCaseRow(tx, caseId);
    authorizeRead(actor, c);
    const head = (await tx.select({ seq: caseSeq.seq }).from(caseSeq).where(eq(caseSeq.caseId, c.id)).get())?.seq ?? 0;
    await upsertSeen(tx, c.id, [actor.id], head, now);
    const read = await readLiveNotices(tx, c.id, [actor.id], now);
    return { caseId: c.id, seq: head, noticesRead: read.length } satisfies SeenView;
  });
}
