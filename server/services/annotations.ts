/**
 * Marks on a case's traces. Every change takes the case's next seq from the database in the same
 * transaction as the write (`case_seq`, one row per case, bumped with an upsert: the database's
 * write lock orders writers of every node, so the numbers are unique and leave no gap); the case
 * is read again and the live policy asked in that transaction. The caller broadcasts the returned
 * record only after the commit.
 *
 * Two ways to write: `…In(tx, …)` is the exact path (every check inside one unit, a precise
 * refusal); the live layer's group commit first tries the batched path of server/realtime/writes.ts
 * and falls back to the exact one.
 */
import { and, asc, eq, gt, isNull, sql } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import type { Actor } from "../auth/session";
import { assertCanJoinCase, assertLiveWrite, assertOwnAnnotation } from "../auth/policies/live";
import { badRequest, notFound } from "../http/errors";
import { parseWith } from "../http/validate";
import { getCaseRow } from "../workflow/records";
import {
  annotationShapeSchema,
  type AnnotationCreate,
  type AnnotationKind,
  type AnnotationUpdate,
} from "../../shared/schemas/realtime";
import { authorColor, type AnnotationRecord } from "../../shared/realtime";

export type AnnotationRow = typeof schema.annotation.$inferSelect;
export type TraceRow = typeof schema.trace.$inferSelect;

const { annotation, caseSeq, user, trace, caseTable } = schema;

/** An actor with the colour of their marks. */
export type LiveActor = Actor & { color: string };

/** The actor's mark colour: user.color when set, else derived from id and role (shared/realtime.ts). */
export async function withColor(tx: Tx, actor: Actor): Promise<LiveActor> {
  const row = await tx.select({ color: user.color }).from(user).where(eq(user.id, actor.id)).get();
  return { ...actor, color: authorColor({ id: actor.id, role: actor.role, color: row?.color }) };
}

/** The statement that takes the case's next seq (the first is 1); run it in the unit that writes the record. */
export function bumpSeq(tx: Tx, caseId: string) {
  return tx
    .insert(caseSeq)
    .values({ caseId, seq: 1 })
    .onConflictDoUpdate({ target: caseSeq.caseId, set: { seq: sql`${caseSeq.seq} + 1` } })
    .returning({ seq: caseSeq.seq });
}

/** Takes the case's next seq inside the caller's write unit. */
export async function nextSeq(tx: Tx, caseId: string): Promise<number> {
  const rows = await bumpSeq(tx, caseId);
  return rows[0].seq;
}

/** The last seq handed out for the case (0 when none). */
export async function headSeq(tx: Tx, caseId: string): Promise<number> {
  return (await tx.select({ seq: caseSeq.seq }).from(caseSeq).where(eq(caseSeq.caseId, caseId)).get())?.seq ?? 0;
}

export function presentAnnotation(r: AnnotationRow, authorName: string | null): AnnotationRecord {
  return {
    id: r.id,
    caseId: r.caseId,
    traceId: r.traceId,
    kind: r.kind as AnnotationKind,
    t0: r.t0,
    t1: r.t1,
    level: r.level,
    label: r.label,
    channel: r.channel,
    color: r.color,
    authorId: r.authorId,
    authorName,
    clientId: r.clientId,
    seq: r.seq,
    createdAt: r.createdAt.toISOString(),
    updatedAt: r.updatedAt.toISOString(),
    deletedAt: r.deletedAt ? r.deletedAt.toISOString() : null,
  };
}

/** The query of the case's annotations with seq > since, in seq order (see listAnnotations). */
export function annotationsQuery(tx: Tx, caseId: string, since = 0) {
  const where =
    since > 0
      ? and(eq(annotation.caseId, caseId), gt(annotation.seq, since))
      : and(eq(annotation.caseId, caseId), isNull(annotation.deletedAt));
  return tx
    .select({ a: annotation, authorName: user.name })
    .from(annotation)
    .leftJoin(user, eq(user.id, annotation.authorId))
    .where(where)
    .orderBy(asc(annotation.seq));
}

/**
 * The case's annotations with seq > since, in seq order. With since = 0 (a first load) removed
 * marks are left out; with since > 0 their tombstones are included so the client drops them.
 */
export async function listAnnotations(tx: Tx, caseId: string, since = 0): Promise<AnnotationRecord[]> {
  const rows = await annotationsQuery(tx, caseId, since);
  return rows.map((r) => presentAnnotation(r.a, r.authorName));
}

/** Marks must lie on the capture: its time span (with 1 % slack for a click on the edge) and one of its channels. */
export function checkOnTrace(
  t: Pick<TraceRow, "t0" | "durationS" | "channels">,
  a: { t0: number; t1?: number | null; channel?: string | null },
): void {
  const start = t.t0;
  const end = t.t0 + t.durationS;
  const slack = Math.max(t.durationS * 0.01, 1e-9);
  for (const [k, v] of [
    ["t0", a.t0],
    ["t1", a.t1],
  ] as const) {
    if (v != null && (v < start - slack || v > end + slack)) {
      throw badRequest("validation_failed", `Check ${k}: the capture runs from ${start} s to ${end} s.`, {
        fields: [{ path: k, message: "Outside the capture." }],
      });
    }
  }
  if (a.channel != null && !t.channels.some((c) => c.name === a.channel)) {
    throw badRequest(
      "validation_failed",
      `Check channel: this trace has ${t.channels.map((c) => c.name).join(", ")}.`,
      {
        fields: [{ path: "channel", message: "No such channel." }],
      },
    );
  }
}

export interface Written {
  record: AnnotationRecord;
  /** false when a retry with the same clientId found the mark already stored (nothing to broadcast) */
  changed: boolean;
}

/** The query of the case as the live policy reads it (one row or none). */
export function casePolicyQuery(tx: Tx, caseId: string) {
  return tx
    .select({ id: caseTable.id, shopId: caseTable.shopId, status: caseTable.status, expertId: caseTable.expertId })
    .from(caseTable)
    .where(eq(caseTable.id, caseId))
    .limit(1);
}

/** The case as the live policy reads it. */
export async function caseForPolicy(tx: Tx, caseId: string) {
  return (await casePolicyQuery(tx, caseId))[0];
}

/** A mark this author already stored with this clientId (a retry), refused when it belongs to another case. */
export async function priorMark(tx: Tx, authorId: string, clientId: string | undefined, caseId: string) {
  if (!clientId) return undefined;
  const prior = await tx
    .select()
    .from(annotation)
    .where(and(eq(annotation.authorId, authorId), eq(annotation.clientId, clientId)))
    .get();
  if (prior && prior.caseId !== caseId)
    throw badRequest("client_id_reused", "This clientId belongs to a mark on another case.");
  return prior;
}

/** The new mark's row, before its seq is known. */
export function newMarkRow(
  now: Date,
  actor: LiveActor,
  caseId: string,
  input: AnnotationCreate,
): Omit<AnnotationRow, "seq"> {
  return {
    id: crypto.randomUUID(),
    caseId,
    traceId: input.traceId,
    authorId: actor.id,
    clientId: input.clientId ?? null,
    kind: input.kind,
    t0: input.t0,
    t1: input.t1 ?? null,
    level: input.level ?? null,
    label: input.label ? input.label : null,
    channel: input.channel ?? null,
    color: actor.color,
    createdAt: now,
    updatedAt: now,
    deletedAt: null,
  };
}

/** A new mark on a trace of the case. 404 for a trace of another case; idempotent per (author, clientId). */
export async function createAnnotation(
  ctx: AppContext,
  actor: LiveActor,
  caseId: string,
  input: AnnotationCreate,
): Promise<Written> {
  const now = ctx.now();
  return ctx.db.write((tx) => createAnnotationIn(tx, now, actor, caseId, input));
}

/** createAnnotation inside the caller's write unit (the exact path). */
export async function createAnnotationIn(
  tx: Tx,
  now: Date,
  actor: LiveActor,
  caseId: string,
  input: AnnotationCreate,
): Promise<Written> {
  assertLiveWrite(actor, await caseForPolicy(tx, caseId), "annotate");
  const prior = await priorMark(tx, actor.id, input.clientId, caseId);
  if (prior) return { record: presentAnnotation(prior, actor.name), changed: false };
  const t = await tx.select().from(trace).where(eq(trace.id, input.traceId)).get();
  if (!t || t.caseId !== caseId) throw notFound("Trace");
  checkOnTrace(t, input);
  const row: AnnotationRow = { ...newMarkRow(now, actor, caseId, input), seq: await nextSeq(tx, caseId) };
  const { deletedAt: _none, ...values } = row;
  await tx.insert(annotation).values(values).run();
  return { record: presentAnnotation(row, actor.name), changed: true };
}

/** The author's live mark, checked: the case allows annotating, the mark is theirs and not removed. */
export async function loadOwn(tx: Tx, actor: LiveActor, caseId: string, id: string): Promise<AnnotationRow> {
  assertLiveWrite(actor, await caseForPolicy(tx, caseId), "annotate");
  const row = await tx.select().from(annotation).where(eq(annotation.id, id)).get();
  if (!row || row.caseId !== caseId || row.deletedAt) throw notFound("Annotation");
  assertOwnAnnotation(actor, row);
  return row;
}

/** The new values of an updated mark, checked against its kind and its trace. */
export function updatedValues(
  cur: AnnotationRow,
  input: AnnotationUpdate,
  t: Pick<TraceRow, "t0" | "durationS" | "channels">,
) {
  const next = {
    t0: input.t0 !== undefined ? input.t0 : cur.t0,
    t1: input.t1 !== undefined ? input.t1 : cur.t1,
    level: input.level !== undefined ? input.level : cur.level,
    label: input.label !== undefined ? input.label || null : cur.label,
  };
  parseWith(annotationShapeSchema, { kind: cur.kind, ...next }, "annotation");
  checkOnTrace(t, next);
  return next;
}

/** The author moves or relabels a mark; it gets a new seq. */
export async function updateAnnotation(
  ctx: AppContext,
  actor: LiveActor,
  caseId: string,
  input: AnnotationUpdate,
): Promise<Written> {
  const now = ctx.now();
  return ctx.db.write((tx) => updateAnnotationIn(tx, now, actor, caseId, input));
}

/** updateAnnotation inside the caller's write unit (the exact path). */
export async function updateAnnotationIn(
  tx: Tx,
  now: Date,
  actor: LiveActor,
  caseId: string,
  input: AnnotationUpdate,
): Promise<Written> {
  const cur = await loadOwn(tx, actor, caseId, input.id);
  const t = (await tx.select().from(trace).where(eq(trace.id, cur.traceId)).get())!;
  const next = updatedValues(cur, input, t);
  const row: AnnotationRow = { ...cur, ...next, seq: await nextSeq(tx, caseId), updatedAt: now };
  await tx
    .update(annotation)
    .set({ ...next, seq: row.seq, updatedAt: now })
    .where(eq(annotation.id, cur.id))
    .run();
  return { record: presentAnnotation(row, actor.name), changed: true };
}

/** The author removes a mark: it stays as a tombstone with a new seq, so replays remove it too. */
export async function deleteAnnotation(
  ctx: AppContext,
  actor: LiveActor,
  caseId: string,
  id: string,
): Promise<Written> {
  const now = ctx.now();
  return ctx.db.write((tx) => deleteAnnotationIn(tx, now, actor, caseId, id));
}

/** deleteAnnotation inside the caller's write unit (the exact path). */
export async function deleteAnnotationIn(
  tx: Tx,
  now: Date,
  actor: LiveActor,
  caseId: string,
  id: string,
): Promise<Written> {
  const cur = await loadOwn(tx, actor, caseId, id);
  const row: AnnotationRow = { ...cur, seq: await nextSeq(tx, caseId), updatedAt: now, deletedAt: now };
  await tx
    .update(annotation)
    .set({ seq: row.seq, updatedAt: now, deletedAt: now })
    .where(eq(annotation.id, cur.id))
    .run();
  return { record: presentAnnotation(row, actor.name), changed: true };
}

/** GET /api/cases/:id/annotations?since= — the case's readers; one read of the marks and the head seq. */
export async function annotationsSince(ctx: AppContext, actor: Actor, caseId: string, since: number) {
  return ctx.db.read(async (tx) => {
    assertCanJoinCase(actor, await getCaseRow(tx, caseId));
    return { caseId, seq: await headSeq(tx, caseId), annotations: await listAnnotations(tx, caseId, since) };
  });
}
