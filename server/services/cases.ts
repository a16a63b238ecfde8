import { and, asc, desc, eq, sql, type SQL } from "drizzle-orm";
import type { AppContext } from "../context";
import type { Db } from "../db/client";
import { schema } from "../db/client";
import type { Actor } from "../auth/session";
import { caseAbilities, type CaseAbilities, type CaseListScope } from "../auth/policies/cases";
import { parseDtc } from "../../shared/domain/dtc";
import { decodeVin, validateVin, type VinDecoded } from "../../shared/domain/vin";
import { caseCreateSchema, vehicleVinWarnings, type CaseDraft, type CaseListQuery } from "../../shared/schemas/case";
import { zodIssues, type FieldIssue } from "../http/validate";

export type CaseRow = typeof schema.caseTable.$inferSelect;
type CaseInsert = typeof schema.caseTable.$inferInsert;
type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];
type DbLike = Db | Tx;

const { caseTable, caseEvent, trace, photo } = schema;

// ---------------------------------------------------------------------------------------------
// Reading

export function getCaseRow(db: DbLike, id: string): CaseRow | undefined {
  return db.select().from(caseTable).where(eq(caseTable.id, id)).get();
}

// ---------------------------------------------------------------------------------------------
// History

export type CaseEventType = "created" | "edited" | "trace_added" | "trace_deleted" | "photo_added" | "photo_deleted";

export function recordCaseEvent(
  db: DbLike,
  e: { caseId: string; actorId: string | null; type: CaseEventType | (string & {}); at: Date; data?: Record<string, unknown>; fromStatus?: string | null; toStatus?: string | null },
): void {
  db.insert(caseEvent)
    .values({ caseId: e.caseId, actorId: e.actorId, type: e.type, at: e.at, data: e.data ?? null, fromStatus: e.fromStatus ?? null, toStatus: e.toStatus ?? null })
    .run();
}

export function listCaseEvents(db: DbLike, caseId: string) {
  return db
    .select({
      id: caseEvent.id,
      type: caseEvent.type,
      actorId: caseEvent.actorId,
      actorName: schema.user.name,
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
}

/** Marks the case changed (for lists and caches) — call inside the transaction that changed it. */
export function touchCase(db: DbLike, caseId: string, at: Date): void {
  db.update(caseTable).set({ updatedAt: at }).where(eq(caseTable.id, caseId)).run();
}

/** After a commit: tell the clients watching this case to refetch. */
export function announceCaseChange(ctx: AppContext, caseId: string, updatedAt: Date, entity: "case" | "trace" | "photo" = "case", id = caseId): void {
  ctx.realtime.toCase(caseId, "case:updated", { entity, id, caseId, updatedAt: updatedAt.toISOString() });
}

// ---------------------------------------------------------------------------------------------
// Writing

const emptyToNull = (s: string | null | undefined) => (s === undefined ? undefined : s === null || s === "" ? null : s);

/** Columns set by a draft or patch; keys absent from the input stay absent (unchanged). */
function columnsFrom(input: CaseDraft, current?: CaseRow): Partial<CaseInsert> {
  const out: Partial<CaseInsert> = {};
  const v = input.vehicle;
  if (v) {
    if (v.vin !== undefined) out.vin = emptyToNull(v.vin);
    if (v.vinCheckOverride !== undefined) out.vinCheckOverride = v.vinCheckOverride;
    if (v.year !== undefined) out.year = v.year;
    if (v.make !== undefined) out.make = emptyToNull(v.make);
    if (v.model !== undefined) out.model = emptyToNull(v.model);
    if (v.engine !== undefined) out.engine = emptyToNull(v.engine);
    if (v.fuel !== undefined) out.fuel = v.fuel;
    if (v.mileage !== undefined) out.mileage = v.mileage;
    if (v.mileageUnit !== undefined) out.mileageUnit = v.mileageUnit;
    if (v.transmission !== undefined) out.transmission = v.transmission;
  }
  if (input.complaint !== undefined) out.complaint = emptyToNull(input.complaint);
  if (input.codes !== undefined) out.codes = input.codes;
  if (input.system !== undefined) out.system = input.system;
  if (input.symptoms !== undefined) out.symptoms = input.symptoms;
  if (input.conditions !== undefined) {
    const merged: Record<string, unknown> = { ...(current?.conditions ?? {}) };
    for (const [k, val] of Object.entries(input.conditions)) if (val !== undefined) merged[k] = val;
    out.conditions = merged;
  }
  if (input.testsDone !== undefined) out.testsDone = emptyToNull(input.testsDone);
  if (input.partsReplaced !== undefined) out.partsReplaced = emptyToNull(input.partsReplaced);
  if (input.notes !== undefined) out.notes = emptyToNull(input.notes);
  return out;
}

/** A new draft for the actor's shop, with its "created" event. */
export function createCase(ctx: AppContext, actor: Actor & { shopId: string }, input: CaseDraft): CaseRow {
  const now = ctx.now();
  const id = crypto.randomUUID();
  const row: CaseInsert = {
    id,
    shopId: actor.shopId,
    createdBy: actor.id,
    status: "draft",
    codes: [],
    symptoms: [],
    ...columnsFrom(input),
    createdAt: now,
    updatedAt: now,
  };
  ctx.db.transaction((tx) => {
    tx.insert(caseTable).values(row).run();
    recordCaseEvent(tx, { caseId: id, actorId: actor.id, type: "created", at: now, toStatus: "draft" });
  });
  announceCaseChange(ctx, id, now);
  return getCaseRow(ctx.db, id)!;
}

/**
 * Applies a patch to a draft (the policy has checked the state; this runs synchronously after it,
 * so nothing can change the status in between). Records which fields changed.
 */
export function patchCase(ctx: AppContext, actor: Actor, current: CaseRow, patch: CaseDraft): CaseRow {
  const now = ctx.now();
  const cols = columnsFrom(patch, current);
  const changed = Object.keys(cols).filter((k) => JSON.stringify((current as any)[k] ?? null) !== JSON.stringify((cols as any)[k] ?? null));
  if (changed.length === 0) return current;
  ctx.db.transaction((tx) => {
    tx.update(caseTable)
      .set({ ...cols, updatedAt: now })
      .where(eq(caseTable.id, current.id))
      .run();
    recordCaseEvent(tx, { caseId: current.id, actorId: actor.id, type: "edited", at: now, data: { fields: changed } });
  });
  announceCaseChange(ctx, current.id, now);
  return getCaseRow(ctx.db, current.id)!;
}

// ---------------------------------------------------------------------------------------------
// Listing

/** `%` and `_` in the user's text are literal. */
function likePattern(s: string): string {
  return `%${s.replace(/[\\%_]/g, (c) => "\\" + c)}%`;
}
const likeAny = (cols: SQL[], token: string) => {
  const p = likePattern(token);
  return sql.join(
    cols.map((c) => sql`${c} LIKE ${p} ESCAPE '\\'`),
    sql` OR `,
  );
};

const vehicleCols = (): SQL[] => [sql`${caseTable.vin}`, sql`${caseTable.make}`, sql`${caseTable.model}`, sql`${caseTable.engine}`, sql`CAST(${caseTable.year} AS TEXT)`];
const textCols = (): SQL[] => [...vehicleCols(), sql`${caseTable.complaint}`, sql`${caseTable.codes}`, sql`${caseTable.title}`];

function scopeWhere(scope: CaseListScope): SQL | undefined {
  switch (scope.kind) {
    case "shop":
      return eq(caseTable.shopId, scope.shopId);
    case "expert":
      return eq(caseTable.expertId, scope.expertId);
    case "all":
      return undefined;
    case "none":
      return sql`0`;
  }
}

const tokens = (s: string | undefined) => (s ?? "").split(/\s+/).filter((t) => t !== "").slice(0, 10);

export function listCases(ctx: AppContext, scope: CaseListScope, q: CaseListQuery) {
  const conds: (SQL | undefined)[] = [scopeWhere(scope)];
  if (q.status) conds.push(eq(caseTable.status, q.status));
  for (const t of tokens(q.q)) conds.push(sql`(${likeAny(textCols(), t)})`);
  for (const t of tokens(q.vehicle)) conds.push(sql`(${likeAny(vehicleCols(), t)})`);
  const where = and(...conds.filter((c): c is SQL => c !== undefined));

  const dir = q.dir ?? (q.sort === "vehicle" || q.sort === "status" ? "asc" : "desc");
  const by = dir === "asc" ? asc : desc;
  const order: SQL[] = (() => {
    switch (q.sort) {
      case "updatedAt":
        return [by(caseTable.updatedAt)];
      case "status":
        return [by(caseTable.status), desc(caseTable.updatedAt)];
      case "vehicle":
        return [by(sql`lower(coalesce(${caseTable.make}, ''))`), by(sql`lower(coalesce(${caseTable.model}, ''))`), by(caseTable.year)];
      case "year":
        return [by(caseTable.year), desc(caseTable.createdAt)];
      case "createdAt":
      default:
        return [by(caseTable.createdAt)];
    }
  })();

  const total = ctx.db.select({ n: sql<number>`count(*)` }).from(caseTable).where(where).get()?.n ?? 0;
  const rows = ctx.db
    .select({
      c: caseTable,
      traceCount: sql<number>`(select count(*) from ${trace} where ${trace.caseId} = ${caseTable.id})`,
      photoCount: sql<number>`(select count(*) from ${photo} where ${photo.caseId} = ${caseTable.id})`,
    })
    .from(caseTable)
    .where(where)
    .orderBy(...order, asc(caseTable.id))
    .limit(q.pageSize)
    .offset((q.page - 1) * q.pageSize)
    .all();
  return {
    total,
    page: q.page,
    pageSize: q.pageSize,
    items: rows.map((r) => presentCaseSummary(r.c, { traceCount: r.traceCount, photoCount: r.photoCount })),
  };
}

// ---------------------------------------------------------------------------------------------
// Presenting

export interface PresentedCode {
  code: string;
  description: string | null;
  system: string | null;
  generic: boolean | null;
  group?: string;
  misfireCylinder?: number;
  coil?: string;
}

export function presentCodes(codes: string[] | null | undefined): PresentedCode[] {
  return (codes ?? []).map((code) => {
    const p = parseDtc(code);
    if (!p.ok) return { code, description: null, system: null, generic: null };
    const out: PresentedCode = { code: p.code, description: p.description, system: p.system, generic: p.generic };
    if (p.group) out.group = p.group;
    if (p.misfireCylinder !== undefined) out.misfireCylinder = p.misfireCylinder;
    if (p.coil !== undefined) out.coil = p.coil;
    return out;
  });
}

export function presentVehicle(c: CaseRow) {
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

function vinDecodedOf(vin: string | null): VinDecoded | null {
  if (!vin || !validateVin(vin).ok) return null;
  try {
    return decodeVin(vin);
  } catch {
    return null;
  }
}

function caseTitle(c: CaseRow): string {
  if (c.title) return c.title;
  const v = [c.year, c.make, c.model].filter((x) => x != null && x !== "").join(" ");
  return v || "Untitled case";
}

/** What a draft still lacks before it can go to the desk (the complete-case schema's issues). */
export function caseReadiness(c: CaseRow): { complete: boolean; issues: FieldIssue[] } {
  const vehicle: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(presentVehicle(c))) if (v !== null) vehicle[k] = v;
  const input: Record<string, unknown> = { vehicle };
  const optional: Record<string, unknown> = {
    complaint: c.complaint,
    codes: c.codes,
    system: c.system,
    symptoms: c.symptoms,
    conditions: c.conditions,
    testsDone: c.testsDone,
    partsReplaced: c.partsReplaced,
    notes: c.notes,
  };
  for (const [k, v] of Object.entries(optional)) if (v !== null && v !== undefined) input[k] = v;
  const r = caseCreateSchema.safeParse(input);
  const issues: FieldIssue[] = r.success ? [] : zodIssues(r.error);
  for (const w of vehicleVinWarnings({ vin: c.vin, vinCheckOverride: c.vinCheckOverride })) {
    issues.push({ path: "vehicle.vin", message: w.message });
  }
  return { complete: issues.length === 0, issues };
}

const caseDates = (c: CaseRow) => ({
  createdAt: c.createdAt,
  updatedAt: c.updatedAt,
  submittedAt: c.submittedAt,
  claimedAt: c.claimedAt,
  deadlineAt: c.deadlineAt,
});

export function presentCaseSummary(c: CaseRow, counts: { traceCount: number; photoCount: number }) {
  return {
    id: c.id,
    status: c.status,
    title: caseTitle(c),
    shopId: c.shopId,
    vehicle: presentVehicle(c),
    complaint: c.complaint,
    codes: presentCodes(c.codes),
    system: c.system,
    traceCount: Number(counts.traceCount),
    photoCount: Number(counts.photoCount),
    ...caseDates(c),
  };
}

export function presentCase<T, P, X>(c: CaseRow, actor: Actor, extra: { traces: T[]; photos: P[]; comparison: X | null }) {
  const abilities: CaseAbilities = caseAbilities(actor, c);
  return {
    id: c.id,
    status: c.status,
    title: caseTitle(c),
    shopId: c.shopId,
    createdBy: c.createdBy,
    expertId: c.expertId,
    vehicle: presentVehicle(c),
    vinDecoded: vinDecodedOf(c.vin),
    vinWarnings: vehicleVinWarnings({ vin: c.vin, vinCheckOverride: c.vinCheckOverride, year: c.year }),
    complaint: c.complaint,
    codes: presentCodes(c.codes),
    system: c.system,
    symptoms: c.symptoms ?? [],
    conditions: c.conditions ?? {},
    testsDone: c.testsDone,
    partsReplaced: c.partsReplaced,
    notes: c.notes,
    tier: c.tier,
    priceCents: c.priceCents,
    ...caseDates(c),
    readiness: caseReadiness(c),
    traces: extra.traces,
    photos: extra.photos,
    comparison: extra.comparison,
    abilities,
  };
}
