/**
 * What the workflow's pages read: the expert's queue, a case's workflow panel, its history, its
 * payment, its answers. Each asks the policy for the actor, then reads in one read unit.
 */
import { and, asc, eq, inArray, sql } from "drizzle-orm";
import type { AppContext } from "../context";
import type { Actor } from "../auth/session";
import { schema, type Tx } from "../db/client";
import { forbidden } from "../http/errors";
import { publicPricing } from "../services/pricing";
import { currentPayment, presentPayment } from "../payments/store";
import { splitCents } from "../../shared/domain/money";
import { caseLabel } from "../../shared/domain/case-label";
import { ignitionSafetyNote } from "../../shared/schemas/queue";
import type { AnswerView, ConfirmationView, QueueItem, QueueView } from "../../shared/views/queue";
import type {
  CasePaymentView,
  CaseStateView,
  HistoryView,
  WorkflowAbilities,
  WorkflowAbility,
  WorkflowView,
} from "../../shared/views/workflow";
import type { CaseStatus } from "../../shared/domain/case-status";
import { abilitiesFor, authorize, authorizeView, canSeeQueue, canViewCase, type ExpertFacts } from "./policy";
import { caseHistory, expertProfileOf, getCaseRow, type CaseRow } from "./records";
import { OPEN_FOR_EXPERT, openCaseCounts } from "./routing";

const { caseTable, caseOffer, caseAnswer, caseConfirmation } = schema;

export function presentCaseState(
  c: Pick<CaseRow, "id" | "status" | "deadlineAt" | "expertId" | "claimedAt">,
): CaseStateView {
  return {
    id: c.id,
    status: c.status as CaseStatus,
    deadlineAt: c.deadlineAt?.toISOString() ?? null,
    expertId: c.expertId,
    claimedAt: c.claimedAt?.toISOString() ?? null,
  } satisfies CaseStateView;
}

/**
 * The case, for a page or a file of it (traces, photos, similar cases): 404 unless the actor may
 * view it — its readers, and approved experts while it is queued.
 */
export async function viewableCase(ctx: AppContext, actor: Actor, caseId: string, what = "Case"): Promise<CaseRow> {
  return ctx.db.read(async (tx) => {
    const c = await getCaseRow(tx, caseId);
    authorizeView(actor, await expertProfileOf(tx, actor), c, what);
    return c;
  });
}

/** The case and the actor's profile, in a read unit, after the policy said the actor may see it. */
async function viewable(tx: Tx, actor: Actor, caseId: string): Promise<{ c: CaseRow; profile: ExpertFacts | null }> {
  const c = await getCaseRow(tx, caseId);
  const profile = await expertProfileOf(tx, actor);
  authorizeView(actor, profile, c);
  return { c, profile };
}

async function presentItem(
  tx: Tx,
  c: CaseRow,
  offer: { rank: number; wave: number } | undefined,
  traceCounts: Map<string, number>,
): Promise<QueueItem> {
  const qs = await tx.select().from(schema.caseQueueState).where(eq(schema.caseQueueState.caseId, c.id)).get();
  const p = await currentPayment(tx, c.id);
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
  } satisfies QueueItem;
}

async function traceCountsOf(tx: Tx, ids: string[]): Promise<Map<string, number>> {
  const out = new Map<string, number>();
  if (!ids.length) return out;
  const rows = await tx
    .select({ caseId: schema.trace.caseId, n: sql<number>`count(*)` })
    .from(schema.trace)
    .where(inArray(schema.trace.caseId, ids))
    .groupBy(schema.trace.caseId)
    .all();
  for (const r of rows) out.set(r.caseId, Number(r.n));
  return out;
}

/** GET /api/queue: offers first (by wave, then deadline), then the rest of the queue by deadline. */
export async function queueView(ctx: AppContext, actor: Actor): Promise<QueueView> {
  return ctx.db.read(async (tx) => {
    const profile = await expertProfileOf(tx, actor);
    if (!canSeeQueue(actor, profile)) {
      if (actor.role === "expert")
        throw forbidden("Your expert profile is not approved yet; the queue opens once the desk approves it.");
      throw forbidden("The queue is for the desk's experts.");
    }
    const expert = actor.role === "expert";
    const queued = await tx
      .select()
      .from(caseTable)
      .where(eq(caseTable.status, "queued"))
      .orderBy(asc(caseTable.deadlineAt), asc(caseTable.id))
      .all();
    const mineWhere = and(
      eq(caseTable.expertId, actor.id),
      inArray(caseTable.status, [...OPEN_FOR_EXPERT, "answered"]),
    );
    const mine = expert
      ? await tx.select().from(caseTable).where(mineWhere).orderBy(asc(caseTable.deadlineAt)).all()
      : [];
    const traceCounts = await traceCountsOf(
      tx,
      [...queued, ...mine].map((c) => c.id),
    );
    const offerRows = expert ? await tx.select().from(caseOffer).where(eq(caseOffer.expertId, actor.id)).all() : [];
    const offers = new Map(offerRows.map((o) => [o.caseId, { rank: o.rank, wave: o.wave }] as const));
    const items: QueueItem[] = [];
    for (const c of queued) items.push(await presentItem(tx, c, offers.get(c.id), traceCounts));
    const byDeadline = (a: QueueItem, b: QueueItem) => (a.deadlineAt ?? "").localeCompare(b.deadlineAt ?? "");
    const offered = items
      .filter((i) => i.offered)
      .sort((a, b) => (a.offerWave ?? 9) - (b.offerWave ?? 9) || byDeadline(a, b));
    const mineItems: QueueItem[] = [];
    for (const c of mine) mineItems.push(await presentItem(tx, c, offers.get(c.id), traceCounts));
    const open = expert ? ((await openCaseCounts(tx)).get(actor.id) ?? 0) : 0;
    return {
      offers: offered,
      queue: items.filter((i) => !i.offered).sort(byDeadline),
      mine: mineItems,
      me: profile
        ? { available: profile.available, openCases: open, maxOpenCases: profile.maxOpenCases, status: profile.status }
        : null,
    } satisfies QueueView;
  });
}

const WORKFLOW_ACTIONS = [
  "submit",
  "withdraw",
  "claim",
  "release",
  "reassign",
  "requestData",
  "dataSent",
  "answer",
  "confirm",
  "refund",
  "viewPayment",
  "deleteDraft",
] as const;

export function workflowAbilities(actor: Actor, profile: ExpertFacts | null, c: CaseRow): WorkflowAbilities {
  const read = canViewCase(actor, profile, c);
  const acts = abilitiesFor(actor, profile, c, WORKFLOW_ACTIONS);
  const out = { read, history: read } as Record<WorkflowAbility, boolean>;
  for (const a of WORKFLOW_ACTIONS) out[a] = read && acts[a];
  return out as WorkflowAbilities;
}

/** The answers and the shop's confirmations of a case, oldest first. */
export async function answersOf(
  tx: Tx,
  caseId: string,
): Promise<{ answers: AnswerView[]; confirmations: ConfirmationView[] }> {
  const a = await tx
    .select({ a: caseAnswer, name: schema.user.name })
    .from(caseAnswer)
    .leftJoin(schema.user, eq(schema.user.id, caseAnswer.expertId))
    .where(eq(caseAnswer.caseId, caseId))
    .orderBy(asc(caseAnswer.round), asc(caseAnswer.createdAt))
    .all();
  const c = await tx
    .select({ c: caseConfirmation, name: schema.user.name })
    .from(caseConfirmation)
    .leftJoin(schema.user, eq(schema.user.id, caseConfirmation.userId))
    .where(eq(caseConfirmation.caseId, caseId))
    .orderBy(asc(caseConfirmation.createdAt))
    .all();
  return {
    answers: a.map(({ a, name }) => ({
      id: a.id,
      round: a.round,
      expertId: a.expertId,
      expertName: name ?? null,
      diagnosis: a.diagnosis,
      rootCause: a.rootCause,
      recommendedFix: a.recommendedFix,
      testsToConfirm: a.testsToConfirm,
      safetyNote: ignitionSafetyNote,
      createdAt: a.createdAt.toISOString(),
    })),
    confirmations: c.map(({ c, name }) => ({
      id: c.id,
      answerId: c.answerId,
      fixed: c.fixed,
      note: c.note,
      rating: c.rating,
      userName: name ?? null,
      createdAt: c.createdAt.toISOString(),
    })),
  };
}

/** GET /api/cases/:id/answers: the shop, the expert on the case, admins. */
export async function answersView(ctx: AppContext, actor: Actor, caseId: string) {
  return ctx.db.read(async (tx) => {
    const c = await getCaseRow(tx, caseId);
    authorize(actor, await expertProfileOf(tx, actor), "viewAnswers", c);
    return answersOf(tx, c.id);
  });
}

/** GET /api/cases/:id/workflow: everything the case page shows for the paid workflow. */
export async function workflowView(ctx: AppContext, actor: Actor, caseId: string): Promise<WorkflowView> {
  return ctx.db.read(async (tx) => {
    const { c, profile } = await viewable(tx, actor, caseId);
    const qs =
      (await tx.select().from(schema.caseQueueState).where(eq(schema.caseQueueState.caseId, c.id)).get()) ?? null;
    const p = await currentPayment(tx, c.id);
    const expert = c.expertId
      ? ((await tx
          .select({ id: schema.user.id, name: schema.user.name })
          .from(schema.user)
          .where(eq(schema.user.id, c.expertId))
          .get()) ?? null)
      : null;
    const abilities = workflowAbilities(actor, profile, c);
    const canAnswers = abilitiesFor(actor, profile, c, ["viewAnswers"]).viewAnswers;
    return {
      ...presentCaseState(c),
      tier: c.tier,
      priceCents: c.priceCents,
      expert,
      payment: p && abilities.viewPayment ? presentPayment(p) : null,
      paymentMessage: abilities.viewPayment ? (qs?.lastPaymentError ?? null) : null,
      needsDataMessage: c.status === "needs_data" ? (qs?.needsDataMessage ?? null) : null,
      notFixedCount: qs?.notFixedCount ?? 0,
      ...(canAnswers ? await answersOf(tx, c.id) : { answers: [], confirmations: [] }),
      pricing: abilities.submit ? await publicPricing(tx) : null,
      shopId: c.shopId,
      shopName:
        (await tx.select({ name: schema.shop.name }).from(schema.shop).where(eq(schema.shop.id, c.shopId)).get())
          ?.name ?? null,
      casebookEntryId: c.status === "resolved" ? await publishedEntryOf(tx, c.id) : null,
      abilities,
    } satisfies WorkflowView;
  });
}

/** The casebook entry a resolved case was published as, unless the desk has hidden it. */
async function publishedEntryOf(tx: Tx, caseId: string): Promise<string | null> {
  const e = await tx
    .select({ id: schema.casebookEntry.id, hidden: schema.casebookEntry.hidden })
    .from(schema.casebookEntry)
    .where(eq(schema.casebookEntry.caseId, caseId))
    .get();
  return e && !e.hidden ? e.id : null;
}

/** GET /api/cases/:id/history (and /events): who did what when, for whoever may see the case. */
export async function historyView(ctx: AppContext, actor: Actor, caseId: string): Promise<HistoryView> {
  return ctx.db.read(async (tx) => {
    const { c } = await viewable(tx, actor, caseId);
    return { caseId: c.id, status: c.status as CaseStatus, items: await caseHistory(tx, c.id) } satisfies HistoryView;
  });
}

/** GET /api/cases/:id/payment: the shop's members and admins only. */
export async function paymentView(ctx: AppContext, actor: Actor, caseId: string): Promise<CasePaymentView> {
  return ctx.db.read(async (tx) => {
    const c = await getCaseRow(tx, caseId);
    authorize(actor, await expertProfileOf(tx, actor), "viewPayment", c);
    const p = await currentPayment(tx, c.id);
    return {
      caseId: c.id,
      status: c.status as CaseStatus,
      deadlineAt: c.deadlineAt?.toISOString() ?? null,
      payment: p ? presentPayment(p) : null,
    } satisfies CasePaymentView;
  });
}

/** May the actor ask the payment service about this case's payment (GET …/payment?sync=1)? Then its id, when open. */
export async function paymentToRefresh(ctx: AppContext, actor: Actor, caseId: string): Promise<string | null> {
  return ctx.db.read(async (tx) => {
    const c = await getCaseRow(tx, caseId);
    authorize(actor, await expertProfileOf(tx, actor), "viewPayment", c);
    const p = await currentPayment(tx, c.id);
    return p && (p.status === "pending" || p.status === "failed") ? p.id : null;
  });
}
