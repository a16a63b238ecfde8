/**
 * Payouts: an expert's unpaid earnings are sent to their connected account with a transfer through
 * the SDK (the local fake in development and tests). A payout row is written `pending` before the
 * transfer (so two runs cannot pay the same money twice), the transfer carries the payout's id as
 * its idempotency key, and only a transfer that went through writes the ledger's `payout` entry.
 */
import { and, desc, eq, inArray, isNull, sql } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema } from "../db/client";
import { notFound } from "../http/errors";
import { formatCents } from "../../shared/domain/money";
import { caseLabel } from "./case-state";
import { expertTotals, recordLedger } from "./ledger";
import { notify } from "./notifications";
import { getPricing } from "./pricing";

const { payout, expertProfile, ledgerEntry } = schema;

export type PayoutRow = typeof payout.$inferSelect;

/** The expert's connected account (created once, against the fake or Stripe). */
export async function ensureConnectedAccount(ctx: AppContext, expertId: string): Promise<string> {
  const prof = ctx.db.select().from(expertProfile).where(eq(expertProfile.userId, expertId)).get();
  if (!prof) throw notFound("Expert");
  if (prof.stripeAccountId) return prof.stripeAccountId;
  const u = ctx.db.select({ email: schema.user.email }).from(schema.user).where(eq(schema.user.id, expertId)).get();
  const acct = await ctx.stripe.accounts.create(
    { type: "express", ...(u ? { email: u.email } : {}), capabilities: { transfers: { requested: true } }, metadata: { userId: expertId } },
    { idempotencyKey: `account:${expertId}` },
  );
  ctx.db.update(expertProfile).set({ stripeAccountId: acct.id }).where(and(eq(expertProfile.userId, expertId), isNull(expertProfile.stripeAccountId))).run();
  return ctx.db.select({ id: expertProfile.stripeAccountId }).from(expertProfile).where(eq(expertProfile.userId, expertId)).get()!.id!;
}

/** Earned − reversed − (paid + in flight). */
export function unpaidCents(ctx: AppContext, expertId: string): number {
  const t = expertTotals(ctx.db, expertId);
  const inFlight = Number(
    ctx.db
      .select({ s: sql<number>`coalesce(sum(${payout.amountCents}), 0)` })
      .from(payout)
      .where(and(eq(payout.expertId, expertId), eq(payout.status, "pending")))
      .get()?.s ?? 0,
  );
  return t.earnedCents - t.reversedCents - t.paidCents - inFlight;
}

/** Pay one expert everything unpaid. Returns the payout, or null when nothing is owed. */
export async function payoutExpert(ctx: AppContext, expertId: string, actorId: string | null): Promise<PayoutRow | null> {
  const currency = getPricing(ctx.db, ctx.now()).currency;
  // Reserve the amount first: a pending row counts as paid for any concurrent run.
  const pending = ctx.db.transaction(
    (tx) => {
      const t = expertTotals(tx, expertId);
      const inFlight = Number(
        tx.select({ s: sql<number>`coalesce(sum(${payout.amountCents}), 0)` }).from(payout).where(and(eq(payout.expertId, expertId), eq(payout.status, "pending"))).get()?.s ?? 0,
      );
      const amount = t.earnedCents - t.reversedCents - t.paidCents - inFlight;
      if (amount <= 0) return null;
      const row: PayoutRow = { id: crypto.randomUUID(), expertId, amountCents: amount, currency, status: "pending", stripeAccountId: null, stripeTransferId: null, failureMessage: null, createdBy: actorId, createdAt: ctx.now(), paidAt: null };
      tx.insert(payout).values(row).run();
      return row;
    },
    { behavior: "immediate" },
  );
  if (!pending) return null;
  return sendPayout(ctx, pending);
}

async function sendPayout(ctx: AppContext, p: PayoutRow): Promise<PayoutRow> {
  try {
    const account = await ensureConnectedAccount(ctx, p.expertId);
    const tr = await ctx.stripe.transfers.create(
      { amount: p.amountCents, currency: p.currency, destination: account, description: "Burnline expert earnings", metadata: { payoutId: p.id, expertId: p.expertId } },
      { idempotencyKey: `payout:${p.id}` },
    );
    const now = ctx.now();
    ctx.db.transaction((tx) => {
      tx.update(payout).set({ status: "paid", stripeAccountId: account, stripeTransferId: tr.id, paidAt: now, failureMessage: null }).where(eq(payout.id, p.id)).run();
      recordLedger(tx, { key: `payout:${p.id}`, kind: "payout", amountCents: p.amountCents, currency: p.currency, expertId: p.expertId, payoutId: p.id, stripeId: tr.id, at: now });
    });
    await notify(ctx, [p.expertId], {
      kind: "payout",
      title: `Payout sent: ${formatCents(p.amountCents, p.currency.toUpperCase())}`,
      paragraphs: [`We sent ${formatCents(p.amountCents, p.currency.toUpperCase())} of your earnings to your payout account (transfer ${tr.id}).`],
      link: "/earnings",
      actionLabel: "See earnings",
    });
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    ctx.logger.error({ err, payoutId: p.id }, "payout failed");
    ctx.db.update(payout).set({ status: "failed", failureMessage: message.slice(0, 500) }).where(eq(payout.id, p.id)).run();
  }
  return ctx.db.select().from(payout).where(eq(payout.id, p.id)).get()!;
}

/** Pay every expert with unpaid earnings (admin button and the daily sweep). Retries pending payouts. */
export async function runPayouts(ctx: AppContext, actorId: string | null, onlyExpertId?: string): Promise<PayoutRow[]> {
  const out: PayoutRow[] = [];
  // A payout still pending after 10 minutes was interrupted (e.g. a restart): send it again with
  // the same idempotency key, so Stripe answers with the transfer it may already have made.
  const stuckBefore = ctx.now().getTime() - 10 * 60_000;
  const stuck = ctx.db
    .select()
    .from(payout)
    .where(eq(payout.status, "pending"))
    .all()
    .filter((p) => p.createdAt.getTime() < stuckBefore && (!onlyExpertId || p.expertId === onlyExpertId));
  for (const p of stuck) out.push(await sendPayout(ctx, p));
  const experts = onlyExpertId
    ? [onlyExpertId]
    : ctx.db
        .selectDistinct({ id: ledgerEntry.expertId })
        .from(ledgerEntry)
        .where(eq(ledgerEntry.kind, "expert_earning"))
        .all()
        .map((r) => r.id)
        .filter((x): x is string => !!x);
  if (onlyExpertId && !ctx.db.select().from(expertProfile).where(eq(expertProfile.userId, onlyExpertId)).get()) throw notFound("Expert");
  for (const id of experts) {
    const p = await payoutExpert(ctx, id, actorId);
    if (p) out.push(p);
  }
  return out;
}

export interface EarningsView {
  currency: string;
  totals: { earnedCents: number; reversedCents: number; paidCents: number; pendingPayoutCents: number; unpaidCents: number };
  cases: { caseId: string; label: string; capturedAt: string; grossCents: number; deskCents: number; expertCents: number; reversedCents: number; status: string }[];
  payouts: { id: string; amountCents: number; currency: string; status: string; transferId: string | null; createdAt: string; paidAt: string | null; failureMessage: string | null }[];
}

/** GET /api/earnings (the expert's own page). */
export function getEarnings(ctx: AppContext, expertId: string): EarningsView {
  const currency = getPricing(ctx.db, ctx.now()).currency;
  const t = expertTotals(ctx.db, expertId);
  const earnings = ctx.db.select().from(ledgerEntry).where(and(eq(ledgerEntry.expertId, expertId), inArray(ledgerEntry.kind, ["expert_earning", "expert_earning_reversal"]))).all();
  const paymentIds = [...new Set(earnings.map((e) => e.paymentId).filter((x): x is string => !!x))];
  const pays = paymentIds.length ? ctx.db.select({ p: schema.payment, c: schema.caseTable }).from(schema.payment).innerJoin(schema.caseTable, eq(schema.caseTable.id, schema.payment.caseId)).where(inArray(schema.payment.id, paymentIds)).all() : [];
  const cases = pays
    .map(({ p, c }) => {
      const mine = earnings.filter((e) => e.paymentId === p.id);
      const expertCents = mine.filter((e) => e.kind === "expert_earning").reduce((s, e) => s + e.amountCents, 0);
      const reversedCents = mine.filter((e) => e.kind === "expert_earning_reversal").reduce((s, e) => s + e.amountCents, 0);
      return {
        caseId: c.id,
        label: caseLabel(c),
        capturedAt: (p.capturedAt ?? p.updatedAt).toISOString(),
        grossCents: p.amountCents,
        deskCents: p.amountCents - expertCents,
        expertCents,
        reversedCents,
        status: c.status,
      };
    })
    .sort((a, b) => b.capturedAt.localeCompare(a.capturedAt));
  const payouts = ctx.db
    .select()
    .from(payout)
    .where(eq(payout.expertId, expertId))
    .orderBy(desc(payout.createdAt))
    .all()
    .map((p) => ({ id: p.id, amountCents: p.amountCents, currency: p.currency, status: p.status, transferId: p.stripeTransferId, createdAt: p.createdAt.toISOString(), paidAt: p.paidAt?.toISOString() ?? null, failureMessage: p.failureMessage }));
  const pendingPayoutCents = payouts.filter((p) => p.status === "pending").reduce((s, p) => s + p.amountCents, 0);
  return {
    currency,
    totals: { earnedCents: t.earnedCents, reversedCents: t.reversedCents, paidCents: t.paidCents, pendingPayoutCents, unpaidCents: t.earnedCents - t.reversedCents - t.paidCents - pendingPayoutCents },
    cases,
    payouts,
  };
}

/** Admin overview: each expert's unpaid amount. */
export function payoutOverview(ctx: AppContext): { expertId: string; name: string; unpaidCents: number; paidCents: number }[] {
  const experts = ctx.db.select({ id: schema.user.id, name: schema.user.name }).from(expertProfile).innerJoin(schema.user, eq(schema.user.id, expertProfile.userId)).all();
  return experts.map((e) => ({ expertId: e.id, name: e.name, unpaidCents: unpaidCents(ctx, e.id), paidCents: expertTotals(ctx.db, e.id).paidCents })).filter((e) => e.unpaidCents !== 0 || e.paidCents !== 0);
}

