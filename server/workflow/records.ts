/**
 * The one module for case rows and their history: reading a case, recording what happened to it
 * (case_event), moving its status, its queue state, who hears about it, and telling the clients
 * watching it to refetch.
 *
 * Functions that take `Tx` run inside a unit of work (db.write / db.read) and are awaited. The few
 * that the synchronous parts of the server also use (uploads, the live layer) accept the embedded
 * database or its synchronous transaction as well and then answer at once (overloads).
 */
import { and, asc, eq } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import { conflict, notFound } from "../http/errors";
import { canTransition, caseStatusWords, type CaseStatus } from "../../shared/domain/case-status";
import type { HistoryEntryView } from "../../shared/views/workflow";
import { caseReadiness, type CaseReadiness } from "../../shared/domain/case-readiness";

export type CaseRow = typeof schema.caseTable.$inferSelect;
export type QueueStateRow = typeof schema.caseQueueState.$inferSelect;
export type ExpertProfileRow = typeof schema.expertProfile.$inferSelect;

const { caseTable, caseEvent, caseQueueState } = schema;

// ---------------------------------------------------------------------------------------------
// Reading

/** The case row, or undefined. */
export async function getCaseRow(tx: Tx, id: string): Promise<CaseRow | undefined> {
  return tx.select().from(caseTable).where(eq(caseTable.id, id)).get();
}

/** The case row; 404 when there is none. */
export async function requireCase(tx: Tx, id: string): Promise<CaseRow> {
  const c = await getCaseRow(tx, id);
  if (!c) throw notFound("Case");
  return c;
}

/** The actor's expert profile (experts only), for the policy. */
export async function expertProfileOf(tx: Tx, actor: { id: string; role: string }): Promise<ExpertProfileRow | null> {
  if (actor.role !== "expert") return null;
  return (await tx.select().from(schema.expertProfile).where(eq(schema.expertProfile.userId, actor.id)).get()) ?? null;
}

/** The vehicle columns of a case as the API shows them. */
export function vehicleOf(c: CaseRow) {
  return {
    vin: c.vin,
    vinCheckOverride: c.vinCheckOverride,
    year: c.year,
    make: c.make,
    model: c.model,
    engine: c.engine,
    fuel: c.fuel,
    mileage: c.mileage,
    mileageUnit: c.mileageUnit,
    transmission: c.transmission,
  };
}

/** Is the stored case ready for the desk (the one rule of shared/domain/case-readiness.ts)? */
export function readinessOfRow(c: CaseRow): CaseReadiness {
  const { complaint, codes, system, symptoms, conditions, testsDone, partsReplaced, notes } = c;
  return caseReadiness({
    vehicle: vehicleOf(c),
    complaint,
    codes,
    system,
    symptoms,
    conditions,
    testsDone,
    partsReplaced,
    notes,
  });
}

// ---------------------------------------------------------------------------------------------
// History

export type CaseEventType =
  "created" | "edited" | "trace_added" | "trace_deleted" | "photo_added" | "photo_deleted" | (string & {});

export interface CaseEventInput {
  caseId: string;
  actorId: string | null;
  type: CaseEventType;
  at: Date;
  data?: Record<string, unknown> | null;
  fromStatus?: string | null;
  toStatus?: string | null;
}

/** Records one entry of the case's history (in the transaction that did it). */
export async function recordCaseEvent(tx: Tx, e: CaseEventInput): Promise<void> {
  await tx
    .insert(caseEvent)
    .values({
      caseId: e.caseId,
      actorId: e.actorId,
      type: e.type,
      fromStatus: e.fromStatus ?? null,
      toStatus: e.toStatus ?? null,
      data: e.data ?? null,
      at: e.at,
    })
    .run();
}

/** Marks the case changed (for lists and caches), in the transaction that changed it. */
export async function touchCase(tx: Tx, caseId: string, at: Date): Promise<void> {
  await tx.update(caseTable).set({ updatedAt: at }).where(eq(caseTable.id, caseId)).run();
}

/** The history of a case, oldest first, with each actor's name and role. */
export async function caseHistory(tx: Tx, caseId: string): Promise<HistoryEntryView[]> {
  const rows = await tx
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
  return rows.map((r) => ({
    ...r,
    actorName: r.actorName ?? null,
    actorRole: r.actorRole ?? null,
    data: r.data ?? null,
    at: r.at.toISOString(),
  }));
}

// ---------------------------------------------------------------------------------------------
// Moving the status

export function describeStatus(s: string): string {
  return caseStatusWords[s as CaseStatus] ?? s;
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
  /** the 409's code and message when the case is not in an expected state */
  code?: string;
  message?: string;
}

/**
 * Moves a case from one status to another with a conditional `UPDATE … WHERE status = <current>`
 * and records the move, in the caller's unit. 404 when the case is missing; 409 (`spec.code`, else
 * `invalid_transition`) when it is not in `from` or the move is not in the action table. A move to
 * the same status only updates the row and records the event.
 */
export async function transition(tx: Tx, spec: TransitionSpec): Promise<CaseRow> {
  const row = await requireCase(tx, spec.caseId);
  const current = row.status as CaseStatus;
  const expected = (typeof spec.from === "string" ? [spec.from] : spec.from) as readonly CaseStatus[];
  const moves = current === spec.to || canTransition(current, spec.to);
  if (!expected.includes(current) || !moves) {
    throw conflict(
      spec.code ?? "invalid_transition",
      spec.message ?? `This case is ${describeStatus(current)}; it cannot become ${describeStatus(spec.to)}.`,
      { status: current, to: spec.to },
    );
  }
  const changed = await tx
    .update(caseTable)
    .set({ ...(spec.set ?? {}), status: spec.to, updatedAt: spec.at })
    .where(and(eq(caseTable.id, spec.caseId), eq(caseTable.status, current)))
    .returning()
    .all();
  if (changed.length !== 1) {
    throw conflict(
      spec.code ?? "invalid_transition",
      spec.message ?? "The case changed in the meantime; reload and try again.",
      {
        status: current,
        to: spec.to,
      },
    );
  }
  await recordCaseEvent(tx, {
    caseId: spec.caseId,
    actorId: spec.actorId,
    type: spec.type,
    fromStatus: current,
    toStatus: spec.to,
    data: spec.data ?? null,
    at: spec.at,
  });
  return changed[0];
}

// ---------------------------------------------------------------------------------------------
// Queue state (payment attempt, needs-data pause, reminders)

/** The queue state row of a case, created empty on first use. */
export async function queueState(tx: Tx, caseId: string, at: Date): Promise<QueueStateRow> {
  const found = await tx.select().from(caseQueueState).where(eq(caseQueueState.caseId, caseId)).get();
  if (found) return found;
  await tx.insert(caseQueueState).values({ caseId, updatedAt: at }).onConflictDoNothing().run();
  return (await tx.select().from(caseQueueState).where(eq(caseQueueState.caseId, caseId)).get())!;
}

export async function updateQueueState(
  tx: Tx,
  caseId: string,
  at: Date,
  set: Partial<typeof caseQueueState.$inferInsert>,
): Promise<void> {
  await queueState(tx, caseId, at);
  await tx
    .update(caseQueueState)
    .set({ ...set, updatedAt: at })
    .where(eq(caseQueueState.caseId, caseId))
    .run();
}

// ---------------------------------------------------------------------------------------------
// Who hears about a case

export async function shopOwners(tx: Tx, shopId: string): Promise<string[]> {
  const rows = await tx
    .select({ id: schema.user.id })
    .from(schema.user)
    .where(and(eq(schema.user.shopId, shopId), eq(schema.user.role, "owner")))
    .all();
  return rows.map((r) => r.id);
}

/** The shop's people who hear about a case: whoever opened it and the shop's owners. */
export async function shopRecipients(tx: Tx, c: Pick<CaseRow, "shopId" | "createdBy">): Promise<string[]> {
  const owners = await shopOwners(tx, c.shopId);
  return [...new Set([...(c.createdBy ? [c.createdBy] : []), ...owners])];
}

// ---------------------------------------------------------------------------------------------
// Telling the clients

/** After a commit: clients watching the case refetch (`case:updated`; the realtime layer adds `case:status`). */
export function announceCaseChange(
  ctx: AppContext,
  caseId: string,
  updatedAt: Date = ctx.now(),
  entity: "case" | "trace" | "photo" = "case",
  id = caseId,
): void {
  ctx.realtime.toCase(caseId, "case:updated", { entity, id, caseId, updatedAt: updatedAt.toISOString() });
}
