/**
 * The queue: routing paid cases to experts, claims, releases, requests for more data, and the
 * timed sweeps (widening offers, deadline warnings, missed deadlines, closing unconfirmed answers,
 * catching up captures). All times come from ctx.now(); deadlines are stored, so the sweeps pick up
 * where they left off after a restart.
 *
 * Routing: a paid case is offered first to available, approved experts whose systems include the
 * case's system and whose makes include its make (or who take any make), who are under their limit
 * of open cases. They are ranked by
 *   1. match: the make named in their profile before "any make";
 *   2. load: the lower share of their open-case limit in use first;
 *   3. record: more resolved cases and a better average rating first.
 * The first `firstWaveSize` are offered. When nobody matches, or nobody claims within
 * `widenAfterMinutes`, the offer widens to every approved, available expert.
 */
import { and, asc, eq, gt, inArray, isNull, lte, sql } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema } from "../db/client";
import type { Actor } from "../auth/session";
import { conflict, forbidden, notFound } from "../http/errors";
import { splitCents } from "../../shared/domain/money";
import {
  announceCase,
  caseLabel,
  loadCase,
  queueState,
  recordEvent,
  shopRecipients,
  transitionCase,
  updateQueueState,
  type CaseRow,
  type DbLike,
  type Tx,
} from "./case-state";
import { notify } from "./notifications";
import { getPricing } from "./pricing";
import { assertCanSeeQueue, assertQueueAction, expertProfileOf, isApprovedExpert, type ExpertProfileRow } from "../auth/policies/queue";
import { captureCasePayment, currentPayment, returnCaseMoney, releaseStrayHolds } from "./payments-flow";
import { sweeps } from "./background";
import type { QueueItem, QueueView } from "../../shared/views/queue";
export type { QueueItem, QueueView };

const { caseTable, caseOffer, expertProfile } = schema;
const OPEN_STATES = ["claimed", "needs_data"] as const;

const norm = (s: string | null | undefined) => (s ?? "").trim().toLowerCase();

// ---------------------------------------------------------------------------------------------
// Ranking and offers

export interface Candidate {
  expertId: string;
  name: string;
  available: boolean;
  systemMatch: boolean;
  makeMatch: "named" | "any" | "none";
  openCases: number;
  maxOpenCases: number;
  resolved: number;
  rating: number | null;
  /** eligible for the first wave */
  eligible: boolean;
  score: number;
}

export function openCaseCounts(db: DbLike): Map<string, number> {
  const rows = db
    .select({ expertId: caseTable.expertId, n: sql<number>`count(*)` })
    .from(caseTable)
    .where(inArray(caseTable.status, [...OPEN_STATES]))
    .groupBy(caseTable.expertId)
    .all();
  return new Map(rows.filter((r) => r.expertId).map((r) => [r.expertId!, Number(r.n)]));
}

export function expertRecords(db: DbLike): Map<string, { resolved: number; rating: number | null }> {
  const resolved = db
    .select({ expertId: caseTable.expertId, n: sql<number>`count(*)` })
    .from(caseTable)
    .where(eq(caseTable.status, "resolved"))
    .groupBy(caseTable.expertId)
    .all();
  const ratings = db
    .select({ expertId: schema.caseConfirmation.expertId, avg: sql<number | null>`avg(${schema.caseConfirmation.rating})` })
    .from(schema.caseConfirmation)
    .where(sql`${schema.caseConfirmation.rating} is not null`)
    .groupBy(schema.caseConfirmation.expertId)
    .all();
  const out = new Map<string, { resolved: number; rating: number | null }>();
  for (const r of resolved) if (r.expertId) out.set(r.expertId, { resolved: Number(r.n), rating: null });
  for (const r of ratings) {
    if (!r.expertId) continue;
    const cur = out.get(r.expertId) ?? { resolved: 0, rating: null };
    out.set(r.expertId, { ...cur, rating: r.avg == null ? null : Number(r.avg) });
  }
  return out;
}

/** Every approved expert, ranked for this case (eligible ones first). */
export function rankExperts(db: DbLike, c: Pick<CaseRow, "system" | "make">): Candidate[] {
  const profiles = db
    .select({ p: expertProfile, name: schema.user.name, deactivated: schema.user.deactivatedAt })
    .from(expertProfile)
    .innerJoin(schema.user, eq(schema.user.id, expertProfile.userId))
    .where(eq(expertProfile.status, "approved"))
    .all()
    .filter((r) => !r.deactivated);
  const loads = openCaseCounts(db);
  const records = expertRecords(db);
  const make = norm(c.make);
  const list: Candidate[] = profiles.map(({ p, name }) => {
    const systemMatch = !!c.system && (p.systems ?? []).includes(c.system);
    const makes = (p.makes ?? []).map(norm).filter(Boolean);
    const makeMatch: Candidate["makeMatch"] = makes.length === 0 ? "any" : make && makes.includes(make) ? "named" : "none";
    const openCases = loads.get(p.userId) ?? 0;
    const rec = records.get(p.userId) ?? { resolved: 0, rating: null };
    const eligible = p.available && systemMatch && makeMatch !== "none" && openCases < p.maxOpenCases;
    // An informative score with the same order as the comparator below.
    const score = (makeMatch === "named" ? 2 : 1) * 1000 + Math.round((1 - openCases / Math.max(1, p.maxOpenCases)) * 100) + Math.min(rec.resolved, 50) + (rec.rating ?? 3);
    return { expertId: p.userId, name, available: p.available, systemMatch, makeMatch, openCases, maxOpenCases: p.maxOpenCases, resolved: rec.resolved, rating: rec.rating, eligible, score };
  });
  const recordScore = (x: Candidate) => x.resolved * ((x.rating ?? 3) / 5);
  list.sort(
    (a, b) =>
      Number(b.eligible) - Number(a.eligible) ||
      Number(b.makeMatch === "named") - Number(a.makeMatch === "named") ||
      a.openCases / Math.max(1, a.maxOpenCases) - b.openCases / Math.max(1, b.maxOpenCases) ||
      recordScore(b) - recordScore(a) ||
      a.expertId.localeCompare(b.expertId),
  );
  return list;
}

function insertOffers(tx: Tx, caseId: string, picks: Candidate[], wave: number, now: Date): string[] {
  const offered: string[] = [];
  const existing = new Set(tx.select({ e: caseOffer.expertId }).from(caseOffer).where(eq(caseOffer.caseId, caseId)).all().map((r) => r.e));
  let rank = existing.size;
  for (const cand of picks) {
    if (existing.has(cand.expertId)) continue;
    rank += 1;
    tx.insert(caseOffer)
      .values({
        caseId,
        expertId: cand.expertId,
        wave,
        rank,
        score: cand.score,
        reason: { systemMatch: cand.systemMatch, makeMatch: cand.makeMatch, openCases: cand.openCases, resolved: cand.resolved, rating: cand.rating },
        offeredAt: now,
      })
      .onConflictDoNothing()
      .run();
    offered.push(cand.expertId);
  }
  return offered;
}

/**
 * Offers for a case that just entered the queue (called inside the payment's transaction).
 * Returns the experts offered; nobody matching → widened at once.
 */
export function createOffers(tx: Tx, c: CaseRow, now: Date): string[] {
  const pricing = getPricing(tx, now);
  const ranked = rankExperts(tx, c);
  const first = ranked.filter((x) => x.eligible).slice(0, pricing.firstWaveSize);
  const offered = insertOffers(tx, c.id, first, 1, now);
  recordEvent(tx, { caseId: c.id, actorId: null, type: "offered", at: now, data: { wave: 1, experts: offered.length } });
  if (offered.length === 0) return widenInTx(tx, c, now, "no matching expert available");
  return offered;
}

function widenInTx(tx: Tx, c: CaseRow, now: Date, why: string): string[] {
  const everyone = rankExperts(tx, c).filter((x) => x.available);
  const offered = insertOffers(tx, c.id, everyone, 2, now);
  updateQueueState(tx, c.id, now, { offersWidenedAt: now });
  recordEvent(tx, { caseId: c.id, actorId: null, type: "offers_widened", at: now, data: { experts: offered.length, why } });
  return offered;
}

/** Mail and in-app notice to the experts just offered a case. */
export async function notifyOffers(ctx: AppContext, caseId: string, expertIds: string[]): Promise<void> {
  if (expertIds.length === 0) return;
  const c = loadCase(ctx.db, caseId);
  if (!c) return;
  const p = currentPayment(ctx.db, caseId);
  const earning = p ? splitCents(p.amountCents, p.deskShareBasisPoints).expertCents : null;
  const due = c.deadlineAt ? c.deadlineAt.toISOString().replace("T", " ").slice(0, 16) + " UTC" : "soon";
  const vehicle = [c.year, c.make, c.model, c.engine].filter(Boolean).join(" ");
  await notify(ctx, expertIds, {
    kind: "case_offered",
    caseId,
    title: `Case offered: ${caseLabel(c)}`,
    paragraphs: [
      `A ${p?.tierLabel ?? ""} case matching your specialties is waiting in the queue${vehicle ? ` (${vehicle}, ${c.system ?? "system not given"})` : ""}. The answer is due by ${due}.`,
      ...(earning != null ? [`Your share when you answer: ${(earning / 100).toFixed(2)} ${p!.currency.toUpperCase()}.`] : []),
      "The first expert to claim it takes it.",
    ],
    link: "/queue",
    actionLabel: "Open the queue",
  });
}

// ---------------------------------------------------------------------------------------------
// The expert's queue



function presentItem(db: DbLike, c: CaseRow, offer: { rank: number; wave: number } | undefined, traceCounts: Map<string, number>): QueueItem {
  const qs = db.select().from(schema.caseQueueState).where(eq(schema.caseQueueState.caseId, c.id)).get();
  const p = currentPayment(db, c.id);
  return {
    id: c.id,
    label: caseLabel(c),
    vehicle: { year: c.year, make: c.make, model: c.model, engine: c.engine },
    system: c.system,
    codes: c.codes ?? [],
    complaint: c.complaint ? c.complaint.slice(0, 400) : null,
    tier: c.tier,
    priceCents: c.priceCents,
    expertShareCents: p ? splitCents(p.amountCents, p.deskShareBasisPoints).expertCents : null,
    currency: p?.currency ?? "usd",
    deadlineAt: c.deadlineAt?.toISOString() ?? null,
    queuedAt: qs?.queuedAt?.toISOString() ?? null,
    status: c.status,
    offered: !!offer,
    offerRank: offer?.rank ?? null,
    offerWave: offer?.wave ?? null,
    traceCount: traceCounts.get(c.id) ?? 0,
  };
}

/** GET /api/queue: offers first (by rank, then deadline), then the rest of the queue by deadline. */
export function listQueue(ctx: AppContext, actor: Actor): QueueView {
  const profile = expertProfileOf(ctx.db, actor);
  assertCanSeeQueue(actor, profile);
  const queued = ctx.db.select().from(caseTable).where(eq(caseTable.status, "queued")).orderBy(asc(caseTable.deadlineAt), asc(caseTable.id)).all();
  const mine = actor.role === "expert" ? ctx.db.select().from(caseTable).where(and(eq(caseTable.expertId, actor.id), inArray(caseTable.status, [...OPEN_STATES, "answered"]))).orderBy(asc(caseTable.deadlineAt)).all() : [];
  const ids = [...queued, ...mine].map((c) => c.id);
  const traceCounts = new Map<string, number>();
  if (ids.length) {
    for (const r of ctx.db.select({ caseId: schema.trace.caseId, n: sql<number>`count(*)` }).from(schema.trace).where(inArray(schema.trace.caseId, ids)).groupBy(schema.trace.caseId).all()) {
      traceCounts.set(r.caseId, Number(r.n));
    }
  }
  const offers = new Map(
    actor.role === "expert"
      ? ctx.db.select().from(caseOffer).where(eq(caseOffer.expertId, actor.id)).all().map((o) => [o.caseId, { rank: o.rank, wave: o.wave }] as const)
      : [],
  );
  const items = queued.map((c) => presentItem(ctx.db, c, offers.get(c.id), traceCounts));
  const byDeadline = (a: QueueItem, b: QueueItem) => (a.deadlineAt ?? "").localeCompare(b.deadlineAt ?? "");
  const offered = items.filter((i) => i.offered).sort((a, b) => (a.offerWave ?? 9) - (b.offerWave ?? 9) || byDeadline(a, b));
  const rest = items.filter((i) => !i.offered).sort(byDeadline);
  const open = actor.role === "expert" ? (openCaseCounts(ctx.db).get(actor.id) ?? 0) : 0;
  return {
    offers: offered,
    queue: rest,
    mine: mine.map((c) => presentItem(ctx.db, c, offers.get(c.id), traceCounts)),
    me: profile ? { available: profile.available, openCases: open, maxOpenCases: profile.maxOpenCases, status: profile.status } : null,
  };
}

/** PUT /api/queue/availability: available ↔ away. */
export function setAvailability(ctx: AppContext, actor: Actor, available: boolean): { available: boolean } {
  const profile = expertProfileOf(ctx.db, actor);
  if (!profile) throw forbidden("Only experts set themselves available or away.");
  ctx.db.update(expertProfile).set({ available }).where(eq(expertProfile.userId, actor.id)).run();
  return { available };
}

// ---------------------------------------------------------------------------------------------
// Claim, release, more data

/**
 * POST /api/cases/:id/claim. One transaction with a conditional UPDATE … WHERE status = 'queued':
 * of two experts claiming at once, one wins and the other gets 409 `already_claimed`.
 */
export async function claimCase(ctx: AppContext, actor: Actor, caseId: string): Promise<CaseRow> {
  const now = ctx.now();
  const profile = expertProfileOf(ctx.db, actor);
  if (!isApprovedExpert(actor, profile)) {
    if (actor.role === "expert") throw forbidden("Your expert profile is not approved yet.");
    throw forbidden("Only approved experts claim cases.");
  }
  const row = ctx.db.transaction(
    (tx) => {
      const c = loadCase(tx, caseId);
      if (!c || c.status === "draft" || c.status === "awaiting_payment") throw notFound("Case");
      if (c.status !== "queued") {
        if (c.expertId === actor.id && (c.status === "claimed" || c.status === "needs_data")) throw conflict("already_claimed", "You have already claimed this case.", { status: c.status });
        throw conflict("already_claimed", "Another expert claimed this case first.", { status: c.status });
      }
      const open = openCaseCounts(tx).get(actor.id) ?? 0;
      if (open >= profile!.maxOpenCases) {
        throw conflict("load_limit", `You have ${open} open case${open === 1 ? "" : "s"} and your limit is ${profile!.maxOpenCases}. Answer or release one first.`, { openCases: open, maxOpenCases: profile!.maxOpenCases });
      }
      const { row } = transitionCase(tx, {
        caseId,
        from: "queued",
        to: "claimed",
        actorId: actor.id,
        type: "claimed",
        at: now,
        set: { expertId: actor.id, claimedAt: now },
        code: "already_claimed",
        message: "Another expert claimed this case first.",
      });
      return row;
    },
    { behavior: "immediate" },
  );
  announceCase(ctx, caseId);
  await notify(ctx, shopRecipients(ctx.db, row), {
    kind: "case_claimed",
    caseId,
    title: `An expert took your case: ${caseLabel(row)}`,
    paragraphs: [`${actor.name} has claimed the case and is looking at it now. You will hear when they answer or need another capture.`],
    link: `/cases/${caseId}`,
    actionLabel: "Open the case",
  });
  return row;
}

/** POST /api/cases/:id/release: back to the queue (claimed → queued), the deadline unchanged. */
export async function releaseCase(ctx: AppContext, actor: Actor, caseId: string): Promise<CaseRow> {
  const now = ctx.now();
  const c = loadCase(ctx.db, caseId);
  assertQueueAction(actor, c, expertProfileOf(ctx.db, actor), "release");
  const row = ctx.db.transaction((tx) => transitionCase(tx, { caseId, from: "claimed", to: "queued", actorId: actor.id, type: "released", at: now, set: { expertId: null, claimedAt: null } }).row);
  announceCase(ctx, caseId);
  await notify(ctx, shopRecipients(ctx.db, row), {
    kind: "case_released",
    caseId,
    title: `Back in the queue: ${caseLabel(row)}`,
    paragraphs: ["The expert handed the case back; it is in the queue again for another expert. The deadline stays the same."],
    link: `/cases/${caseId}`,
    mail: false,
  });
  return row;
}

/** POST /api/cases/:id/request-data: claimed → needs_data; the deadline pauses until the shop answers. */
export async function requestData(ctx: AppContext, actor: Actor, caseId: string, message: string): Promise<CaseRow> {
  const now = ctx.now();
  const c = loadCase(ctx.db, caseId);
  assertQueueAction(actor, c, expertProfileOf(ctx.db, actor), "requestData");
  const row = ctx.db.transaction((tx) => {
    const r = transitionCase(tx, { caseId, from: "claimed", to: "needs_data", actorId: actor.id, type: "data_requested", at: now, data: { message } }).row;
    updateQueueState(tx, caseId, now, { needsDataSince: now, needsDataMessage: message });
    return r;
  });
  announceCase(ctx, caseId);
  await notify(ctx, shopRecipients(ctx.db, row), {
    kind: "data_requested",
    caseId,
    title: `More data requested: ${caseLabel(row)}`,
    paragraphs: [`${actor.name} asks: “${message}”`, "Add the capture or photo to the case, or mark the request as answered. The deadline is paused meanwhile."],
    link: `/cases/${caseId}`,
    actionLabel: "Open the case",
  });
  return row;
}

/**
 * needs_data → claimed (the shop sent what was asked, by upload or explicitly). The deadline moves
 * on by the time spent waiting. Returns null when the case was not waiting for data.
 */
export async function dataReceived(ctx: AppContext, caseId: string, actorId: string | null, how: "sent" | "uploaded", note?: string): Promise<CaseRow | null> {
  const now = ctx.now();
  const row = ctx.db.transaction((tx) => {
    const c = loadCase(tx, caseId);
    if (!c || c.status !== "needs_data") return null;
    const qs = queueState(tx, caseId, now);
    const pausedMs = qs.needsDataSince ? Math.max(0, now.getTime() - qs.needsDataSince.getTime()) : 0;
    const deadlineAt = c.deadlineAt ? new Date(c.deadlineAt.getTime() + pausedMs) : null;
    const r = transitionCase(tx, {
      caseId,
      from: "needs_data",
      to: "claimed",
      actorId,
      type: how === "sent" ? "data_sent" : "data_uploaded",
      at: now,
      data: { pausedMinutes: Math.round(pausedMs / 60_000), ...(note ? { note } : {}) },
      set: { deadlineAt },
    }).row;
    updateQueueState(tx, caseId, now, { needsDataSince: null, deadlineWarnedAt: null });
    return r;
  });
  if (!row) return null;
  announceCase(ctx, caseId);
  if (row.expertId) {
    await notify(ctx, [row.expertId], {
      kind: "data_sent",
      caseId,
      title: `The shop answered your request: ${caseLabel(row)}`,
      paragraphs: [how === "uploaded" ? "New material was added to the case." : `The shop says the data is in${note ? `: “${note}”` : "."}`, "The case is back with you."],
      link: `/cases/${caseId}`,
    });
  }
  return row;
}

/** POST /api/cases/:id/data-sent */
export async function markDataSent(ctx: AppContext, actor: Actor, caseId: string, note?: string): Promise<CaseRow> {
  const c = loadCase(ctx.db, caseId);
  assertQueueAction(actor, c, expertProfileOf(ctx.db, actor), "dataSent");
  const row = await dataReceived(ctx, caseId, actor.id, "sent", note);
  if (!row) throw conflict("invalid_transition", "The expert has not asked for more data.");
  return row;
}

/** For the uploads: call after a trace or photo is added to a case (moves needs_data back to claimed). */
export async function noteNewMaterial(ctx: AppContext, caseId: string, actorId: string | null): Promise<void> {
  await dataReceived(ctx, caseId, actorId, "uploaded");
}

// ---------------------------------------------------------------------------------------------
// Withdraw

/** POST /api/cases/:id/withdraw: draft, awaiting payment or queued (before any claim) → withdrawn; the hold is cancelled. */
export async function withdrawCase(ctx: AppContext, actor: Actor, caseId: string): Promise<CaseRow> {
  const now = ctx.now();
  const c = loadCase(ctx.db, caseId);
  assertQueueAction(actor, c, expertProfileOf(ctx.db, actor), "withdraw");
  const row = ctx.db.transaction(
    (tx) =>
      transitionCase(tx, {
        caseId,
        from: ["draft", "awaiting_payment", "queued"],
        to: "withdrawn",
        actorId: actor.id,
        type: "withdrawn",
        at: now,
        message: "An expert is already working on this case, so it can no longer be withdrawn.",
      }).row,
    { behavior: "immediate" },
  );
  announceCase(ctx, caseId);
  if (c.status !== "draft") {
    await returnCaseMoney(ctx, caseId, "requested_by_customer");
    await releaseStrayHolds(ctx, caseId);
  }
  if (c.status === "queued") {
    const offered = ctx.db.select({ e: caseOffer.expertId }).from(caseOffer).where(eq(caseOffer.caseId, caseId)).all().map((r) => r.e);
    await notify(ctx, offered, { kind: "case_withdrawn", caseId, title: `Withdrawn: ${caseLabel(row)}`, paragraphs: ["The shop withdrew this case before anyone claimed it."], mail: false });
  }
  return row;
}

// ---------------------------------------------------------------------------------------------
// Sweeps

/** An unclaimed case is offered to every approved, available expert after `widenAfterMinutes`. */
export async function sweepWidenOffers(ctx: AppContext): Promise<number> {
  const now = ctx.now();
  const pricing = getPricing(ctx.db, now);
  const cutoff = new Date(now.getTime() - pricing.widenAfterMinutes * 60_000);
  const due = ctx.db
    .select({ c: caseTable })
    .from(caseTable)
    .innerJoin(schema.caseQueueState, eq(schema.caseQueueState.caseId, caseTable.id))
    .where(and(eq(caseTable.status, "queued"), isNull(schema.caseQueueState.offersWidenedAt), lte(schema.caseQueueState.queuedAt, cutoff)))
    .all();
  for (const { c } of due) {
    const offered = ctx.db.transaction((tx) => {
      const cur = loadCase(tx, c.id);
      if (!cur || cur.status !== "queued") return [];
      return widenInTx(tx, cur, now, `unclaimed after ${pricing.widenAfterMinutes} minutes`);
    });
    await notifyOffers(ctx, c.id, offered);
  }
  return due.length;
}

/** Warn when a fifth of the answer window (at least 15 minutes) is left. */
export async function sweepDeadlineWarnings(ctx: AppContext): Promise<number> {
  const now = ctx.now();
  const open = ctx.db
    .select({ c: caseTable, qs: schema.caseQueueState })
    .from(caseTable)
    .innerJoin(schema.caseQueueState, eq(schema.caseQueueState.caseId, caseTable.id))
    .where(and(inArray(caseTable.status, ["queued", "claimed"]), isNull(schema.caseQueueState.deadlineWarnedAt), gt(caseTable.deadlineAt, now)))
    .all();
  let warned = 0;
  for (const { c } of open) {
    const p = currentPayment(ctx.db, c.id);
    const windowMs = (p?.deadlineMinutes ?? 24 * 60) * 60_000;
    const leftMs = c.deadlineAt!.getTime() - now.getTime();
    if (leftMs > Math.max(15 * 60_000, windowMs / 5)) continue;
    updateQueueState(ctx.db, c.id, now, { deadlineWarnedAt: now });
    const to = c.status === "claimed" && c.expertId ? [c.expertId] : ctx.db.select({ e: caseOffer.expertId }).from(caseOffer).where(eq(caseOffer.caseId, c.id)).all().map((r) => r.e);
    const minutes = Math.round(leftMs / 60_000);
    await notify(ctx, to, {
      kind: "deadline_near",
      caseId: c.id,
      title: `Deadline near (${minutes} min): ${caseLabel(c)}`,
      paragraphs: [
        c.status === "claimed" ? `The answer to this case is due in ${minutes} minutes.` : `This case is still unclaimed and its answer is due in ${minutes} minutes.`,
        "If the deadline passes without an answer, the shop's card hold is released and nothing is paid.",
      ],
      link: c.status === "claimed" ? `/cases/${c.id}` : "/queue",
    });
    warned++;
  }
  return warned;
}

/**
 * A missed deadline (queued or claimed, past deadlineAt) → refunded: the hold is cancelled (or the
 * payment refunded if it was captured) and the shop is told. A case waiting for data has its
 * deadline paused, but it is refunded too when its card hold is about to end.
 */
export async function sweepDeadlines(ctx: AppContext): Promise<number> {
  const now = ctx.now();
  const late = ctx.db
    .select()
    .from(caseTable)
    .where(and(inArray(caseTable.status, ["queued", "claimed"]), lte(caseTable.deadlineAt, now)))
    .all();
  const holdEnding = ctx.db
    .select({ c: caseTable })
    .from(caseTable)
    .innerJoin(schema.caseQueueState, eq(schema.caseQueueState.caseId, caseTable.id))
    .innerJoin(schema.payment, eq(schema.payment.id, schema.caseQueueState.paymentId))
    .where(and(eq(caseTable.status, "needs_data"), eq(schema.payment.status, "authorized"), lte(schema.payment.captureBefore, new Date(now.getTime() + 6 * 3600_000))))
    .all()
    .map((r) => r.c);
  let n = 0;
  for (const c of [...late, ...holdEnding]) {
    let row: CaseRow;
    try {
      row = ctx.db.transaction(
        (tx) =>
          transitionCase(tx, {
            caseId: c.id,
            from: ["queued", "claimed", "needs_data"],
            to: "refunded",
            actorId: null,
            type: c.status === "needs_data" ? "hold_ending" : "deadline_missed",
            at: now,
            data: { deadlineAt: c.deadlineAt?.toISOString() ?? null, expertId: c.expertId },
          }).row,
        { behavior: "immediate" },
      );
    } catch {
      continue; // answered or withdrawn in the meantime
    }
    n++;
    announceCase(ctx, c.id);
    await returnCaseMoney(ctx, c.id, "abandoned");
    await releaseStrayHolds(ctx, c.id);
    const label = caseLabel(row);
    await notify(ctx, shopRecipients(ctx.db, row), {
      kind: "deadline_missed",
      caseId: c.id,
      title: `Deadline missed, nothing charged: ${label}`,
      paragraphs: [
        c.status === "needs_data"
          ? "The card authorisation for this case was about to run out while the case waited for more data, so the desk closed it."
          : "The desk did not deliver an answer by the deadline. We are sorry.",
        "The hold on your card has been released: nothing was charged. You can open a new case at any time.",
      ],
      link: `/cases/${c.id}`,
    });
    if (c.expertId) {
      await notify(ctx, [c.expertId], {
        kind: "deadline_missed",
        caseId: c.id,
        title: `Deadline missed: ${label}`,
        paragraphs: ["The deadline of this case passed without an answer; it was closed and the shop's hold released."],
        link: "/queue",
      });
    }
  }
  return n;
}

/** needs_data cases that received a new trace or photo since the request go back to the expert. */
export async function sweepNewMaterial(ctx: AppContext): Promise<number> {
  const waiting = ctx.db
    .select({ id: caseTable.id, since: schema.caseQueueState.needsDataSince })
    .from(caseTable)
    .innerJoin(schema.caseQueueState, eq(schema.caseQueueState.caseId, caseTable.id))
    .where(eq(caseTable.status, "needs_data"))
    .all();
  let n = 0;
  for (const w of waiting) {
    if (!w.since) continue;
    const t = ctx.db.select({ by: schema.trace.uploadedBy }).from(schema.trace).where(and(eq(schema.trace.caseId, w.id), gt(schema.trace.createdAt, w.since))).get();
    const ph = t ? undefined : ctx.db.select({ by: schema.photo.uploadedBy }).from(schema.photo).where(and(eq(schema.photo.caseId, w.id), gt(schema.photo.createdAt, w.since))).get();
    const hit = t ?? ph;
    if (hit && (await dataReceived(ctx, w.id, hit.by ?? null, "uploaded"))) n++;
  }
  return n;
}

/** Answered cases whose hold was not captured (e.g. the server stopped in between) are captured now. */
export async function sweepOutstandingCaptures(ctx: AppContext): Promise<number> {
  const rows = ctx.db
    .select({ caseId: caseTable.id })
    .from(caseTable)
    .innerJoin(schema.caseQueueState, eq(schema.caseQueueState.caseId, caseTable.id))
    .innerJoin(schema.payment, eq(schema.payment.id, schema.caseQueueState.paymentId))
    .where(and(inArray(caseTable.status, ["answered", "resolved", "closed"]), eq(schema.payment.status, "authorized")))
    .all();
  for (const r of rows) await captureCasePayment(ctx, r.caseId);
  return rows.length;
}

// ---------------------------------------------------------------------------------------------
// Registration with the background runner (server/services/background.ts)

/**
 * Every queue sweep, in the order they run. Tests call `runQueueSweeps(ctx)` (or one sweep) after
 * moving ctx.now(); NODE_ENV=test does not run them by itself.
 */
export async function runQueueSweeps(ctx: AppContext): Promise<Record<string, number>> {
  const { sweepCloseAnswered } = await import("./answers");
  return {
    newMaterial: await sweepNewMaterial(ctx),
    deadlines: await sweepDeadlines(ctx),
    warnings: await sweepDeadlineWarnings(ctx),
    widen: await sweepWidenOffers(ctx),
    closeAnswered: await sweepCloseAnswered(ctx),
    captures: await sweepOutstandingCaptures(ctx),
  };
}

/** Adds the queue's sweeps to `sweeps` once (the queue every 30 s, payouts daily). */
export function registerQueueSweeps(): void {
  if (sweeps.some((s) => s.name === "queue")) return;
  sweeps.push({ name: "queue", everyMs: 30_000, run: async (ctx) => void (await runQueueSweeps(ctx)) });
  sweeps.push({
    name: "payouts",
    everyMs: 24 * 3600_000,
    run: async (ctx) => {
      const { runPayouts } = await import("./payouts");
      await runPayouts(ctx, null);
    },
  });
}
