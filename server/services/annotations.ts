/**
 * Marks on a case's traces. Every change takes the case's next seq in the same transaction as
 * the write, inside which the case is read again and the live policy asked; the caller broadcasts
 * the returned record only after this function has returned (i.e. after the commit).
 */
import { and, asc, eq, gt, isNull, sql } from "drizzle-orm";
import type { AppContext } from "../context";
import type { Db } from "../db/client";
import { schema } from "../db/client";
import type { Actor } from "../auth/session";
import { assertCanJoinCase, assertLiveWrite, assertOwnAnnotation } from "../auth/policies/live";
import { badRequest, notFound } from "../http/errors";
import { parseWith } from "../http/validate";
import { getCaseRow } from "../workflow/records";
import { annotationShapeSchema, type AnnotationCreate, type AnnotationKind, type AnnotationUpdate } from "../../shared/schemas/realtime";
import { authorColor, type AnnotationRecord } from "../../shared/realtime";

type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];
export type DbLike = Db | Tx;
export type AnnotationRow = typeof schema.annotation.$inferSelect;

const { annotation, caseSeq, user, trace, caseTable } = schema;

/** The statements of the hot write path, compiled once per database (drizzle prepared queries). */
function prepareStatements(db: Db) {
  const p = sql.placeholder;
  return {
    caseForPolicy: db
      .select({ id: caseTable.id, shopId: caseTable.shopId, status: caseTable.status, expertId: caseTable.expertId })
      .from(caseTable)
      .where(eq(caseTable.id, p("id")))
      .prepare(),
    trace: db.select().from(trace).where(eq(trace.id, p("id"))).prepare(),
    priorMark: db
      .select()
      .from(annotation)
      .where(and(eq(annotation.authorId, p("authorId")), eq(annotation.clientId, p("clientId"))))
      .prepare(),
    nextSeq: db
      .insert(caseSeq)
      .values({ caseId: p("caseId"), seq: 1 })
      .onConflictDoUpdate({ target: caseSeq.caseId, set: { seq: sql`${caseSeq.seq} + 1` } })
      .returning({ seq: caseSeq.seq })
      .prepare(),
    insertMark: db
      .insert(annotation)
      .values({
        id: p("id"),
        caseId: p("caseId"),
        traceId: p("traceId"),
        authorId: p("authorId"),
        clientId: p("clientId"),
        kind: p("kind"),
        t0: p("t0"),
        t1: p("t1"),
        level: p("level"),
        label: p("label"),
        channel: p("channel"),
        color: p("color"),
        seq: p("seq"),
        createdAt: p("createdAt"),
        updatedAt: p("updatedAt"),
        // deleted_at stays NULL (a placeholder would pass null through the timestamp encoder)
      })
      .prepare(),
  };
}
const prepared = new WeakMap<Db, ReturnType<typeof prepareStatements>>();
/** The prepared statements of `db` (run them inside the caller's transaction: same connection). */
export function liveStatements(db: Db): ReturnType<typeof prepareStatements> {
  let s = prepared.get(db);
  if (!s) prepared.set(db, (s = prepareStatements(db)));
  return s;
}

/** An actor with the colour of their marks. */
export type LiveActor = Actor & { color: string };

/** The actor's mark colour: user.color when set, else derived from id and role (shared/realtime.ts). */
export function withColor(db: DbLike, actor: Actor): LiveActor {
  const row = db.select({ color: user.color }).from(user).where(eq(user.id, actor.id)).get();
  return { ...actor, color: authorColor({ id: actor.id, role: actor.role, color: row?.color }) };
}

/**
 * Takes the case's next seq. Call inside the transaction that writes the record it numbers
 * (`db` is the database whose transaction is open: the statement runs on its connection).
 */
export function nextSeq(db: Db, caseId: string): number {
  return liveStatements(db).nextSeq.get({ caseId })!.seq;
}

/** The last seq handed out for the case (0 when none). */
export function headSeq(db: DbLike, caseId: string): number {
  return db.select({ seq: caseSeq.seq }).from(caseSeq).where(eq(caseSeq.caseId, caseId)).get()?.seq ?? 0;
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

/**
 * The case's annotations with seq > since, in seq order. With since = 0 (a first load) removed
 * marks are left out; with since > 0 their tombstones are included so the client drops them.
 */
export function listAnnotations(db: DbLike, caseId: string, since = 0): AnnotationRecord[] {
  const where = since > 0 ? and(eq(annotation.caseId, caseId), gt(annotation.seq, since)) : and(eq(annotation.caseId, caseId), isNull(annotation.deletedAt));
  return db
    .select({ a: annotation, authorName: user.name })
    .from(annotation)
    .leftJoin(user, eq(user.id, annotation.authorId))
    .where(where)
    .orderBy(asc(annotation.seq))
    .all()
    .map((r) => presentAnnotation(r.a, r.authorName));
}

function getRow(db: DbLike, id: string): AnnotationRow | undefined {
  return db.select().from(annotation).where(eq(annotation.id, id)).get();
}

/** Marks must lie on the capture: its time span (with 1 % slack for a click on the edge) and one of its channels. */
function checkOnTrace(t: typeof trace.$inferSelect, a: { t0: number; t1?: number | null; channel?: string | null }): void {
  const start = t.t0;
  const end = t.t0 + t.durationS;
  const slack = Math.max(t.durationS * 0.01, 1e-9);
  for (const [k, v] of [["t0", a.t0], ["t1", a.t1]] as const) {
    if (v != null && (v < start - slack || v > end + slack)) {
      throw badRequest("validation_failed", `Check ${k}: the capture runs from ${start} s to ${end} s.`, { fields: [{ path: k, message: "Outside the capture." }] });
    }
  }
  if (a.channel != null && !t.channels.some((c) => c.name === a.channel)) {
    throw badRequest("validation_failed", `Check channel: this trace has ${t.channels.map((c) => c.name).join(", ")}.`, { fields: [{ path: "channel", message: "No such channel." }] });
  }
}

export interface Written {
  record: AnnotationRecord;
  /** false when a retry with the same clientId found the mark already stored (nothing to broadcast) */
  changed: boolean;
}

/** A new mark on a trace of the case. 404 for a trace of another case; idempotent per (author, clientId). */
export function createAnnotation(ctx: AppContext, actor: LiveActor, caseId: string, input: AnnotationCreate): Written {
  return ctx.db.transaction(() => createAnnotationIn(ctx.db, ctx.now(), actor, caseId, input), { behavior: "immediate" });
}

/**
 * createAnnotation inside a transaction the caller has open on `db` (server/realtime groups
 * several writes in one commit, each in its own savepoint).
 */
export function createAnnotationIn(db: Db, now: Date, actor: LiveActor, caseId: string, input: AnnotationCreate): Written {
  const st = liveStatements(db);
  assertLiveWrite(actor, st.caseForPolicy.get({ id: caseId }), "annotate");
  if (input.clientId) {
    const prior = st.priorMark.get({ authorId: actor.id, clientId: input.clientId });
    if (prior) {
      if (prior.caseId !== caseId) throw badRequest("client_id_reused", "This clientId belongs to a mark on another case.");
      return { record: presentAnnotation(prior, actor.name), changed: false };
    }
  }
  const t = st.trace.get({ id: input.traceId });
  if (!t || t.caseId !== caseId) throw notFound("Trace");
  checkOnTrace(t, input);
  const row: AnnotationRow = {
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
    seq: nextSeq(db, caseId),
    createdAt: now,
    updatedAt: now,
    deletedAt: null,
  };
  const { deletedAt: _none, ...values } = row;
  st.insertMark.run(values);
  return { record: presentAnnotation(row, actor.name), changed: true };
}

function loadOwn(db: Db, actor: LiveActor, caseId: string, id: string): AnnotationRow {
  assertLiveWrite(actor, liveStatements(db).caseForPolicy.get({ id: caseId }), "annotate");
  const row = getRow(db, id);
  if (!row || row.caseId !== caseId || row.deletedAt) throw notFound("Annotation");
  assertOwnAnnotation(actor, row);
  return row;
}

/** The author moves or relabels a mark; it gets a new seq. */
export function updateAnnotation(ctx: AppContext, actor: LiveActor, caseId: string, input: AnnotationUpdate): Written {
  return ctx.db.transaction(() => updateAnnotationIn(ctx.db, ctx.now(), actor, caseId, input), { behavior: "immediate" });
}

/** updateAnnotation inside a transaction the caller has open on `db`. */
export function updateAnnotationIn(db: Db, now: Date, actor: LiveActor, caseId: string, input: AnnotationUpdate): Written {
  const cur = loadOwn(db, actor, caseId, input.id);
  const next = {
    t0: input.t0 !== undefined ? input.t0 : cur.t0,
    t1: input.t1 !== undefined ? input.t1 : cur.t1,
    level: input.level !== undefined ? input.level : cur.level,
    label: input.label !== undefined ? input.label || null : cur.label,
  };
  parseWith(annotationShapeSchema, { kind: cur.kind, ...next }, "annotation");
  const t = db.select().from(trace).where(eq(trace.id, cur.traceId)).get()!;
  checkOnTrace(t, next);
  const row: AnnotationRow = { ...cur, ...next, seq: nextSeq(db, caseId), updatedAt: now };
  db.update(annotation).set({ ...next, seq: row.seq, updatedAt: now }).where(eq(annotation.id, cur.id)).run();
  return { record: presentAnnotation(row, actor.name), changed: true };
}

/** The author removes a mark: it stays as a tombstone with a new seq, so replays remove it too. */
export function deleteAnnotation(ctx: AppContext, actor: LiveActor, caseId: string, id: string): Written {
  return ctx.db.transaction(() => deleteAnnotationIn(ctx.db, ctx.now(), actor, caseId, id), { behavior: "immediate" });
}

/** deleteAnnotation inside a transaction the caller has open on `db`. */
export function deleteAnnotationIn(db: Db, now: Date, actor: LiveActor, caseId: string, id: string): Written {
  const cur = loadOwn(db, actor, caseId, id);
  const row: AnnotationRow = { ...cur, seq: nextSeq(db, caseId), updatedAt: now, deletedAt: now };
  db.update(annotation).set({ seq: row.seq, updatedAt: now, deletedAt: now }).where(eq(annotation.id, cur.id)).run();
  return { record: presentAnnotation(row, actor.name), changed: true };
}

/** GET /api/cases/:id/annotations?since= — the case's readers; one read of the marks and the head seq. */
export function annotationsSince(ctx: AppContext, actor: Actor, caseId: string, since: number) {
  return ctx.db.transaction((tx) => {
    assertCanJoinCase(actor, getCaseRow(tx, caseId));
    return { caseId, seq: headSeq(tx, caseId), annotations: listAnnotations(tx, caseId, since) };
  });
}
