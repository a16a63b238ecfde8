/**
 * The shop's drafts: creating and patching a case, listing the cases an actor may see, and how a
 * case is shown. Case rows and their history live in server/workflow/records.ts; who may do what in
 * server/workflow/policy.ts; the readiness rule in shared/domain/case-readiness.ts.
 */
import { and, asc, desc, eq, sql, type SQL } from "drizzle-orm";
import { alias } from "drizzle-orm/sqlite-core";
import type { AppContext } from "../context";
import { schema } from "../db/client";
import type { Actor } from "../auth/session";
import { assertCaseAction, caseAbilities, type CaseListScope } from "../auth/policies/cases";
import { parseDtc } from "../../shared/domain/dtc";
import { decodeVin, validateVin, type VinDecoded } from "../../shared/domain/vin";
import { vehicleVinWarnings, type CaseDraft, type CaseListQuery } from "../../shared/schemas/case";
import type { CaseListView, CaseSummaryView, CaseVehicleView, CaseView, PresentedCode } from "../../shared/views/case";
import type { CaseFiltersView } from "../../shared/views/desk";
import type { CaseStatus, VehicleSystem } from "../../shared/domain/case-status";
import { caseWaiting } from "../../shared/domain/case-waiting";
import {
  AT_RISK_MIN_MS,
  AT_RISK_SHARE,
  deadlineRisk,
  RUNNING_DEADLINE_STATES,
} from "../../shared/domain/deadline-risk";
import {
  announceCaseChange,
  getCaseRow,
  readinessOfRow,
  recordCaseEvent,
  vehicleOf,
  type CaseRow,
} from "../workflow/records";

export type { PresentedCode };
type CaseInsert = typeof schema.caseTable.$inferInsert;

const { caseTable, trace, photo } = schema;

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
export async function createCase(
  ctx: AppContext,
  actor: Actor & { shopId: string },
  input: CaseDraft,
): Promise<CaseRow> {
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
  const created = await ctx.db.write(async (tx) => {
    await tx.insert(caseTable).values(row).run();
    await recordCaseEvent(tx, { caseId: id, actorId: actor.id, type: "created", at: now, toStatus: "draft" });
    return (await getCaseRow(tx, id))!;
  });
  announceCaseChange(ctx, id, now);
  return created;
}

/**
 * PATCH a draft: in one unit, the case is read, the policy asked (`edit`: the shop, drafts only)
 * and the patch applied, so nothing can change the status in between. Records which fields changed.
 */
export async function patchCase(ctx: AppContext, actor: Actor, caseId: string, patch: CaseDraft): Promise<CaseRow> {
  const now = ctx.now();
  const { row, changed } = await ctx.db.write(async (tx) => {
    const current = await getCaseRow(tx, caseId);
    assertCaseAction(actor, current, "edit");
    const cols = columnsFrom(patch, current);
    const same = (k: string) =>
      JSON.stringify((current as Record<string, unknown>)[k] ?? null) ===
      JSON.stringify((cols as Record<string, unknown>)[k] ?? null);
    const changed = Object.keys(cols).filter((k) => !same(k));
    if (changed.length === 0) return { row: current, changed };
    await tx
      .update(caseTable)
      .set({ ...cols, updatedAt: now })
      .where(eq(caseTable.id, caseId))
      .run();
    await recordCaseEvent(tx, { caseId, actorId: actor.id, type: "edited", at: now, data: { fields: changed } });
    return { row: (await getCaseRow(tx, caseId))!, changed };
  });
  if (changed.length) announceCaseChange(ctx, caseId, now);
  return row;
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

const vehicleCols = (): SQL[] => [
  sql`${caseTable.vin}`,
  sql`${caseTable.make}`,
  sql`${caseTable.model}`,
  sql`${caseTable.engine}`,
  sql`CAST(${caseTable.year} AS TEXT)`,
];
const textCols = (): SQL[] => [
  ...vehicleCols(),
  sql`${caseTable.complaint}`,
  sql`${caseTable.codes}`,
  sql`${caseTable.title}`,
];

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

const tokens = (s: string | undefined) =>
  (s ?? "")
    .split(/\s+/)
    .filter((t) => t !== "")
    .slice(0, 10);

const RUNNING = sql.join(
  RUNNING_DEADLINE_STATES.map((st) => sql`${st}`),
  sql`, `,
);
const FINISHED: CaseStatus[] = ["resolved", "closed", "withdrawn", "refunded"];
const DAY_MS = 24 * 60 * 60_000;

/** The running deadline's risk in SQL, the same rule as shared/domain/deadline-risk.ts. */
function atRiskSql(now: number): SQL {
  const d = caseTable.deadlineAt;
  const window = sql`(${d} - coalesce(${caseTable.submittedAt}, ${d}))`;
  return sql`(${d} - ${now}) < max(${AT_RISK_MIN_MS}, ${window} * ${AT_RISK_SHARE})`;
}
const runningSql = () => sql`(${caseTable.status} in (${RUNNING}) and ${caseTable.deadlineAt} is not null)`;

function deadlineWhere(kind: CaseListQuery["deadline"], now: number): SQL | undefined {
  switch (kind) {
    case "overdue":
      return sql`(${runningSql()} and ${caseTable.deadlineAt} <= ${now})`;
    case "at_risk":
      return sql`(${runningSql()} and ${atRiskSql(now)})`;
    case "next_24h":
      return sql`(${runningSql()} and ${caseTable.deadlineAt} - ${now} < ${DAY_MS})`;
    default:
      return undefined;
  }
}

export type CaseReader = "shop" | "expert" | "admin";
export const readerOf = (actor: Actor): CaseReader =>
  actor.role === "expert" ? "expert" : actor.role === "admin" ? "admin" : "shop";

const inStates = (states: readonly string[]) =>
  sql`${caseTable.status} in (${sql.join(
    states.map((st) => sql`${st}`),
    sql`, `,
  )})`;

/** "attention": what needs someone soonest first, as the reader sees it (docs/api.md). */
function attentionOrder(reader: CaseReader, now: number): SQL[] {
  const rank =
    reader === "shop"
      ? sql`case when ${inStates(["needs_data", "answered", "awaiting_payment"])} then 0
          when ${caseTable.status} = 'draft' then 1 when ${inStates(["queued", "claimed"])} then 2 else 3 end`
      : reader === "expert"
        ? sql`case when ${caseTable.status} = 'claimed' then 0
            when ${inStates(["needs_data", "answered"])} then 1 else 2 end`
        : sql`case when ${runningSql()} and ${caseTable.deadlineAt} <= ${now} then 0
            when ${runningSql()} and ${atRiskSql(now)} then 1 when ${runningSql()} then 2
            when ${inStates(FINISHED)} then 4 else 3 end`;
  const deadline = sql`case when ${runningSql()} then ${caseTable.deadlineAt} end`;
  return [asc(rank), sql`${deadline} is null`, asc(deadline), desc(caseTable.updatedAt)];
}

function listOrder(q: CaseListQuery, reader: CaseReader, now: number): SQL[] {
  const dir = q.dir ?? (q.sort === "vehicle" || q.sort === "status" || q.sort === "deadline" ? "asc" : "desc");
  const by = dir === "asc" ? asc : desc;
  switch (q.sort) {
    case "attention":
      return attentionOrder(reader, now);
    case "deadline":
      return [sql`${caseTable.deadlineAt} is null`, by(caseTable.deadlineAt), desc(caseTable.updatedAt)];
    case "updatedAt":
      return [by(caseTable.updatedAt)];
    case "status":
      return [by(caseTable.status), desc(caseTable.updatedAt)];
    case "vehicle":
      return [
        by(sql`lower(coalesce(${caseTable.make}, ''))`),
        by(sql`lower(coalesce(${caseTable.model}, ''))`),
        by(caseTable.year),
      ];
    case "year":
      return [by(caseTable.year), desc(caseTable.createdAt)];
    case "createdAt":
    default:
      return [by(caseTable.createdAt)];
  }
}

function listWhere(scope: CaseListScope, q: CaseListQuery, now: number): SQL | undefined {
  const conds: (SQL | undefined)[] = [scopeWhere(scope)];
  if (q.status) conds.push(eq(caseTable.status, q.status));
  if (q.state === "finished") conds.push(inStates(FINISHED));
  if (q.state === "open") conds.push(sql`not ${inStates(FINISHED)}`);
  conds.push(deadlineWhere(q.deadline, now));
  if (q.expertId) conds.push(eq(caseTable.expertId, q.expertId));
  if (q.shopId) conds.push(eq(caseTable.shopId, q.shopId));
  for (const t of tokens(q.q)) conds.push(sql`(${likeAny(textCols(), t)})`);
  for (const t of tokens(q.vehicle)) conds.push(sql`(${likeAny(vehicleCols(), t)})`);
  return and(...conds.filter((c): c is SQL => c !== undefined));
}

/** New messages and marks by others after the reader's last seen seq (server/services/reading.ts). */
function unreadSql(readerId: string) {
  const { message, annotation, caseReader } = schema;
  const seen = sql`coalesce((select ${caseReader.seenSeq} from ${caseReader}
    where ${caseReader.caseId} = ${caseTable.id} and ${caseReader.userId} = ${readerId}), 0)`;
  return {
    messages: sql<number>`(select count(*) from ${message} where ${message.caseId} = ${caseTable.id}
      and ${message.seq} > ${seen} and coalesce(${message.authorId}, '') <> ${readerId})`,
    marks: sql<number>`(select count(*) from ${annotation} where ${annotation.caseId} = ${caseTable.id}
      and ${annotation.seq} > ${seen} and coalesce(${annotation.authorId}, '') <> ${readerId}
      and ${annotation.deletedAt} is null)`,
  };
}

export async function listCases(
  ctx: AppContext,
  actor: Actor,
  scope: CaseListScope,
  q: CaseListQuery,
): Promise<CaseListView> {
  const now = ctx.now().getTime();
  const reader = readerOf(actor);
  const where = listWhere(scope, q, now);
  const unread = unreadSql(actor.id);
  const expertUser = alias(schema.user, "expert_user");
  const { total, rows } = await ctx.db.read(async (tx) => ({
    total:
      (
        await tx
          .select({ n: sql<number>`count(*)` })
          .from(caseTable)
          .where(where)
          .get()
      )?.n ?? 0,
    rows: await tx
      .select({
        c: caseTable,
        traceCount: sql<number>`(select count(*) from ${trace} where ${trace.caseId} = ${caseTable.id})`,
        photoCount: sql<number>`(select count(*) from ${photo} where ${photo.caseId} = ${caseTable.id})`,
        shopName: schema.shop.name,
        expertName: expertUser.name,
        needsDataMessage: schema.caseQueueState.needsDataMessage,
        paymentError: schema.caseQueueState.lastPaymentError,
        unreadMessages: unread.messages,
        unreadMarks: unread.marks,
      })
      .from(caseTable)
      .leftJoin(schema.shop, eq(schema.shop.id, caseTable.shopId))
      .leftJoin(expertUser, eq(expertUser.id, caseTable.expertId))
      .leftJoin(schema.caseQueueState, eq(schema.caseQueueState.caseId, caseTable.id))
      .where(where)
      .orderBy(...listOrder(q, reader, now), asc(caseTable.id))
      .limit(q.pageSize)
      .offset((q.page - 1) * q.pageSize)
      .all(),
  }));
  return {
    total,
    page: q.page,
    pageSize: q.pageSize,
    items: rows.map((r) => presentCaseSummary(r.c, { ...r, reader, now })),
  };
}

// ---------------------------------------------------------------------------------------------
// Presenting

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

export function presentVehicle(c: CaseRow): CaseVehicleView {
  const v = vehicleOf(c);
  return {
    ...v,
    vinCheckOverride: !!v.vinCheckOverride,
    mileageUnit: (v.mileageUnit as CaseVehicleView["mileageUnit"]) ?? null,
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

const iso = (d: Date | null) => (d ? d.toISOString() : null);
const caseDates = (c: CaseRow) => ({
  createdAt: c.createdAt.toISOString(),
  updatedAt: c.updatedAt.toISOString(),
  submittedAt: iso(c.submittedAt),
  claimedAt: iso(c.claimedAt),
  deadlineAt: iso(c.deadlineAt),
});

export interface SummaryExtras {
  traceCount: number;
  photoCount: number;
  shopName: string | null;
  expertName: string | null;
  needsDataMessage: string | null;
  paymentError: string | null;
  unreadMessages: number;
  unreadMarks: number;
  reader: CaseReader;
  now: number;
}

export function presentCaseSummary(c: CaseRow, x: SummaryExtras): CaseSummaryView {
  const status = c.status as CaseStatus;
  const readiness = status === "draft" ? readinessOfRow(c) : null;
  return {
    id: c.id,
    status: c.status as CaseStatus,
    title: caseTitle(c),
    shopId: c.shopId,
    vehicle: presentVehicle(c),
    complaint: c.complaint,
    codes: presentCodes(c.codes),
    system: c.system as VehicleSystem | null,
    traceCount: Number(x.traceCount),
    photoCount: Number(x.photoCount),
    shopName: x.shopName,
    expert: c.expertId && x.expertName ? { id: c.expertId, name: x.expertName } : null,
    unread: { messages: Number(x.unreadMessages), marks: Number(x.unreadMarks) },
    waiting: caseWaiting({
      status,
      reader: x.reader,
      ready: readiness?.complete,
      missing: readiness?.issues.length,
      expertName: x.expertName,
      needsDataMessage: x.needsDataMessage,
      paymentProblem: !!x.paymentError,
    }),
    deadlineRisk: deadlineRisk(status, c.deadlineAt, c.submittedAt, x.now),
    ...caseDates(c),
  } satisfies CaseSummaryView;
}

export function presentCase<T, P, X>(
  c: CaseRow,
  actor: Actor,
  extra: { traces: T[]; photos: P[]; comparison: X | null },
): CaseView<T, P, X> {
  return {
    id: c.id,
    status: c.status as CaseStatus,
    title: caseTitle(c),
    shopId: c.shopId,
    createdBy: c.createdBy,
    expertId: c.expertId,
    vehicle: presentVehicle(c),
    vinDecoded: vinDecodedOf(c.vin),
    vinWarnings: vehicleVinWarnings({ vin: c.vin, vinCheckOverride: c.vinCheckOverride, year: c.year }),
    complaint: c.complaint,
    codes: presentCodes(c.codes),
    system: c.system as VehicleSystem | null,
    symptoms: c.symptoms ?? [],
    conditions: c.conditions ?? {},
    testsDone: c.testsDone,
    partsReplaced: c.partsReplaced,
    notes: c.notes,
    tier: c.tier,
    priceCents: c.priceCents,
    ...caseDates(c),
    readiness: readinessOfRow(c),
    traces: extra.traces,
    photos: extra.photos,
    comparison: extra.comparison,
    abilities: caseAbilities(actor, c),
  } satisfies CaseView<T, P, X>;
}

// ---------------------------------------------------------------------------------------------
// The admin's filters

/** GET /api/admin/case-filters: every shop, and every expert who has applied (approved first). */
export async function caseFilters(ctx: AppContext): Promise<CaseFiltersView> {
  return ctx.db.read(async (tx) => {
    const shops = await tx
      .select({ id: schema.shop.id, name: schema.shop.name })
      .from(schema.shop)
      .orderBy(asc(schema.shop.name))
      .all();
    const experts = await tx
      .select({ id: schema.user.id, name: schema.user.name, status: schema.expertProfile.status })
      .from(schema.expertProfile)
      .innerJoin(schema.user, eq(schema.user.id, schema.expertProfile.userId))
      .orderBy(sql`${schema.expertProfile.status} <> 'approved'`, asc(schema.user.name))
      .all();
    return { shops, experts } satisfies CaseFiltersView;
  });
}
