/**
 * How far each reader has read a case's live record (chat and marks share one per-case seq), for
 * the unread counts of the case lists. A reader has read up to the head of the record when they
 * join the case's live review, while they are in it (every write moves the mark of everybody in
 * the room), and when their client says so (POST /api/cases/:id/seen). Reading also marks their
 * notices about new messages and marks on that case as read.
 *
 * The steps are statements, so the live layer can put them in the batch that stores a write (one
 * transaction, one round trip to a libSQL server) with the seq the batch hands out.
 */
import { and, eq, inArray, isNull, sql, type SQL } from "drizzle-orm";
import type { AppContext } from "../context";
import type { Actor } from "../auth/session";
import { schema, type Db, type Statement, type Tx } from "../db/client";
import { authorizeRead } from "../workflow/policy";
import { getCaseRow } from "../workflow/records";
import type { SeenView } from "../../shared/views/desk";

const { caseReader, caseSeq, notification } = schema;

/** The kinds of notice that reading the live record answers. */
const LIVE_NOTICES = ["new_message", "new_mark"];

/** Their unread notices about new messages and marks on the case become read. */
function readLiveNotices(q: Tx, caseId: string, userIds: string[], at: Date) {
  return q
    .update(notification)
    .set({ readAt: at })
    .where(
      and(
        inArray(notification.userId, userIds),
        eq(notification.caseId, caseId),
        inArray(notification.kind, LIVE_NOTICES),
        isNull(notification.readAt),
      ),
    );
}

/**
 * These users have read the case up to `seq` (a number, or an expression such as the case's seq
 * in the batch that stores a write); their notices about new messages and marks on it are read.
 * No statement for no user.
 */
export function seenStatements(
  q: Tx,
  caseId: string,
  userIds: readonly string[],
  seq: number | SQL<number>,
  at: Date,
): Statement[] {
  const ids = [...new Set(userIds)];
  if (ids.length === 0) return [];
  return [
    q
      .insert(caseReader)
      .values(ids.map((userId) => ({ caseId, userId, seenSeq: seq, seenAt: at })))
      .onConflictDoUpdate({
        target: [caseReader.caseId, caseReader.userId],
        set: { seenSeq: sql`max(${caseReader.seenSeq}, excluded.seen_seq)`, seenAt: at },
      }),
    readLiveNotices(q, caseId, ids, at),
  ];
}

/** The same in a write unit of its own (a join: the record up to its replay's head is read). */
export async function markSeen(db: Db, caseId: string, userIds: readonly string[], seq: number, at: Date) {
  const steps = (q: Tx) => seenStatements(q, caseId, userIds, seq, at);
  if (userIds.length) await db.batch("write", (q) => steps(q) as [Statement, ...Statement[]]);
}

/** Inside a unit: the same steps, run one by one (the exact path of a live write). */
export async function markSeenIn(tx: Tx, caseId: string, userIds: readonly string[], seq: number, at: Date) {
  for (const st of seenStatements(tx, caseId, userIds, seq, at)) await st;
}

/** POST /api/cases/:id/seen: the case's readers (404 for anybody else, as for a missing case). */
export async function markCaseSeen(ctx: AppContext, actor: Actor, caseId: string): Promise<SeenView> {
  const now = ctx.now();
  return ctx.db.write(async (tx) => {
    const c = await getCaseRow(tx, caseId);
    authorizeRead(actor, c);
    const head = (await tx.select({ seq: caseSeq.seq }).from(caseSeq).where(eq(caseSeq.caseId, c.id)).get())?.seq ?? 0;
    const [upsert] = seenStatements(tx, c.id, [actor.id], head, now);
    await upsert;
    const read = await readLiveNotices(tx, c.id, [actor.id], now).returning({ id: notification.id }).all();
    return { caseId: c.id, seq: head, noticesRead: read.length } satisfies SeenView;
  });
}
