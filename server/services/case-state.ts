/**
 * Case states with a history of who did what when. Every status change goes through
 * `transitionCase`: it checks shared/domain/case-status.ts, updates the row with a conditional
 * `UPDATE … WHERE status = <expected>` (so two racing requests cannot both move the case) and writes
 * a case_event row in the same transaction. An invalid move answers 409 and changes nothing.
 */
import { and, asc, eq, inArray } from "drizzle-orm";
import type { AppContext } from "../context";
import type { Db } from "../db/client";
import { schema } from "../db/client";
import { canTransition, type CaseStatus } from "../../shared/domain/case-status";
import { conflict, notFound } from "../http/errors";

export type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];
export type DbLike = Db | Tx;
export type CaseRow = typeof schema.caseTable.$inferSelect;
export type QueueStateRow = typeof schema.caseQueueState.$inferSelect;

const { caseTable, caseEvent, caseQueueState } = schema;

export function loadCase(db: DbLike, caseId: string): CaseRow | undefined {
  return db.select().from(caseTable).where(eq(caseTable.id, caseId)).get();
}

export function requireCase(db: DbLike, caseId: string): CaseRow {
  const c = loadCase(db, caseId);
  if (!c) throw notFound("Case");
  return c;
}

export function recordEvent(
  db: DbLike,
  e: { caseId: string; actorId: string | null; type: string; at: Date; data?: Record<string, unknown> | null; fromStatus?: string | null; toStatus?: string | null },
): void {
  db.insert(caseEvent)
    .values({ caseId: e.caseId, actorId: e.actorId, type: e.type, fromStatus: e.fromStatus ?? null, toStatus: e.toStatus ?? null, data: e.data ?? null, at: e.at })
    .run();
}

const statusWords: Record<CaseStatus, string> = {
  draft: "a draft",
  awaiting_payment: "awaiting payment",
  queued: "in the queue",
  claimed: "claimed by an expert",
  needs_data: "waiting for more data",
  answered: "answered",
  resolved: "resolved",
  closed: "closed",
  withdrawn: "withdrawn",
  refunded: "refunded",
};

export function describeStatus(s: string): string {
  return statusWords[s as CaseStatus] ?? s;
}

export interface TransitionSpec {
  caseId: string;
  /** the state(s) the caller expects the case to be in */
  from: CaseStatus | readonly CaseStatus[];
  to: CaseStatus;
  actorId: string | null;
  /** the history entry's type, e.g. "claimed", "payment_authorized" */
  type: string;
  at: Date;
  data?: Record<string, unknown>;
  /** further columns of the case row to set in the same UPDATE */
  set?: Partial<typeof caseTable.$inferInsert>;
  /** extra WHERE conditions (e.g. expertId = actor) */
  where?: ReturnType<typeof eq>;
  /** the 409's message when the case is not in an expected state */
  message?: string;
  code?: string;
}

/**
 * Move a case from one status to another inside `tx`. Throws 404 when the case does not exist and
 * 409 (`invalid_transition`, or `spec.code`) when it is not in `from`, the move is not allowed, or a
 * concurrent request moved it first. Returns the status it came from.
 */
export function transitionCase(tx: Tx, spec: TransitionSpec): { from: CaseStatus; row: CaseRow } {
  const row = requireCase(tx, spec.caseId);
  const expected = (Array.isArray(spec.from) ? spec.from : [spec.from]) as readonly CaseStatus[];
  const current = row.status as CaseStatus;
  if (!expected.includes(current) || !canTransition(current, spec.to)) {
    throw conflict(
      spec.code ?? "invalid_transition",
      spec.message ?? `This case is ${describeStatus(current)}; it cannot become ${describeStatus(spec.to)}.`,
      { status: current, to: spec.to },
    );
  }
  const conds = [eq(caseTable.id, spec.caseId), eq(caseTable.status, current)];
  if (spec.where) conds.push(spec.where);
  const res = tx
    .update(caseTable)
    .set({ ...(spec.set ?? {}), status: spec.to, updatedAt: spec.at })
    .where(and(...conds))
    .run();
  if (res.changes !== 1) {
    throw conflict(spec.code ?? "invalid_transition", spec.message ?? "The case changed in the meantime; reload and try again.", { status: current, to: spec.to });
  }
  recordEvent(tx, { caseId: spec.caseId, actorId: spec.actorId, type: spec.type, fromStatus: current, toStatus: spec.to, data: spec.data ?? null, at: spec.at });
  return { from: current, row: { ...row, ...(spec.set ?? {}), status: spec.to, updatedAt: spec.at } as CaseRow };
}

/** The queue state row of a case, created empty on first use. */
export function queueState(tx: DbLike, caseId: string, at: Date): QueueStateRow {
  const found = tx.select().from(caseQueueState).where(eq(caseQueueState.caseId, caseId)).get();
  if (found) return found;
  tx.insert(caseQueueState).values({ caseId, updatedAt: at }).onConflictDoNothing().run();
  return tx.select().from(caseQueueState).where(eq(caseQueueState.caseId, caseId)).get()!;
}

export function updateQueueState(tx: DbLike, caseId: string, at: Date, set: Partial<typeof caseQueueState.$inferInsert>): void {
  queueState(tx, caseId, at);
  tx.update(caseQueueState)
    .set({ ...set, updatedAt: at })
    .where(eq(caseQueueState.caseId, caseId))
    .run();
}

/** After a commit: clients watching the case refetch (same message as the cases area sends). */
export function announceCase(ctx: AppContext, caseId: string): void {
  ctx.realtime.toCase(caseId, "case:updated", { entity: "case", id: caseId, caseId, updatedAt: ctx.now().toISOString() });
}

export interface HistoryEntry {
  id: number;
  type: string;
  actorId: string | null;
  actorName: string | null;
  actorRole: string | null;
  fromStatus: string | null;
  toStatus: string | null;
  data: Record<string, unknown> | null;
  at: string;
}

/** The history of a case, oldest first, with the actor's name and role. */
export function caseHistory(db: DbLike, caseId: string): HistoryEntry[] {
  const rows = db
    .select({
      id: caseEvent.id,
      type: caseEvent.type,
      actorId: caseEvent.actorId,
      actorName: schema.user.name,
      actorRole: schema.user.role,
      fromStatus: caseEvent.fromStatus,
      toStatus: caseEvent.toStatus,
      data: caseEvent.data,
      at: caseEvent.at,
    })
    .from(caseEvent)
    .leftJoin(schema.user, eq(schema.user.id, caseEvent.actorId))
    .where(eq(caseEvent.caseId, caseId))
    .orderBy(asc(caseEvent.at), asc(caseEvent.id))
    .all();
  return rows.map((r) => ({ ...r, actorName: r.actorName ?? null, actorRole: r.actorRole ?? null, data: r.data ?? null, at: r.at.toISOString() }));
}

/** User ids of a shop's people who hear about a case: whoever opened it and the shop's owners. */
export function shopRecipients(db: DbLike, c: Pick<CaseRow, "shopId" | "createdBy">): string[] {
  const owners = db
    .select({ id: schema.user.id })
    .from(schema.user)
    .where(and(eq(schema.user.shopId, c.shopId), inArray(schema.user.role, ["owner"])))
    .all()
    .map((r) => r.id);
  return [...new Set([...(c.createdBy ? [c.createdBy] : []), ...owners])];
}

export function shopOwners(db: DbLike, shopId: string): string[] {
  return db
    .select({ id: schema.user.id })
    .from(schema.user)
    .where(and(eq(schema.user.shopId, shopId), eq(schema.user.role, "owner")))
    .all()
    .map((r) => r.id);
}

/** A short human label for a case in mails and lists: its title, or the vehicle and complaint. */
export function caseLabel(c: Pick<CaseRow, "id" | "title" | "year" | "make" | "model" | "complaint">): string {
  if (c.title) return c.title;
  const vehicle = [c.year, c.make, c.model].filter(Boolean).join(" ");
  const complaint = c.complaint ? shortened(c.complaint, 60) : "";
  return [vehicle, complaint].filter(Boolean).join(" — ") || `Case ${c.id.slice(0, 8)}`;
}

/** At most `max` characters, cut at a word with an ellipsis (not in the middle of a word). */
function shortened(s: string, max: number): string {
  const t = s.replace(/\s+/g, " ").trim();
  if (t.length <= max) return t;
  const cut = t.slice(0, max - 1).replace(/[\s,;:.—-]+\S*$/, "");
  return `${cut || t.slice(0, max - 1)}…`;
}
