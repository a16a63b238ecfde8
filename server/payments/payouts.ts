/**
 * Payouts: an expert's unpaid earnings are sent to their connected account with a transfer through
 * the SDK (the local fake in development and tests). A payout row is written `pending` before the
 * transfer (so two runs cannot pay the same money twice), the transfer carries the payout's id as
 * its idempotency key, and only a transfer that went through writes the ledger's `payout` entry.
 */
import { and, desc, eq, inArray, isNull, sql } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import { notFound } from "../http/errors";
import { caseLabel } from "../../shared/domain/case-label";
import type { EarningsView, PayoutView } from "../../shared/views/money";
import { expertTotals, recordLedger } from "./ledger";
import { notify } from "../services/notifications";
import { notices } from "../services/notices";
import { getPricing } from "../services/pricing";

const { payout, expertProfile, ledgerEntry } = schema;

export type PayoutRow = typeof payout.$inferSelect;

/** The expert's connected account (created once, against the fake or Stripe). */
export async function ensureConnectedAccount(ctx: AppContext, expertId: string): Promise<string> {
  const found = await ctx.db.read(async (tx) => ({
    prof: await tx.select().from(expertProfile).where(eq(expertProfile.userId, expertId)).get(),
    user: await tx.select({ email: schema.user.email }).from(schema.user).where(eq(schema.user.id, expertId)).get(),
  }));
  if (!found.prof) throw notFound("Expert");
  if (found.prof.stripeAccountId) return found.prof.stripeAccountId;
  const acct = await ctx.stripe.accounts.create(
    {
      type: "express",
      ...(found.user ? { email: found.user.email } : {}),
      capabilities: { transfers: { requested: true } },
      metadata: { userId: expertId },
    },
    { idempotencyKey: `account:${expertId}` },
  );
  return ctx.db.write(async (tx) => {
    await tx
      .update(expertProfile)
      .set({ stripeAccountId: acct.id })
      .where(and(eq(expertProfile.userId, expertId), isNull(expertProfile.stripeAccountId)))
      .run();
    return (await tx
      .select({ id: expertProfile.stripeAccountId })
      .from(expertProfile)
      .where(eq(expertProfile.userId, expertId))
      .get())!.id!;
  });
}

async function inFlightCents(tx: Tx, expertId: string): Promise<number> {
  const r = await tx
    .select({ s: sql<number>`coalesce(sum(${payout.amountCents}), 0)` })
    .from(payout)
    .where(and(eq(payout.expertId, expertId), eq(payout.status, "pending")))
    .get();
  return Number(r?.s ?? 0);
}

/** Earned − reversed − (paid + in flight). */
export async function unpaidCents(tx: Tx, expertId: string): Promise<number> {
  const t = await expertTotals(tx, expertId);
  return t.earnedCents - t.reversedCents - t.paidCents - (await inFlightCents(tx, expertId));
}

/** Pay one expert everything unpaid. Returns the payout, or null when nothing is owed. */
export async function payoutExpert(
  ctx: AppContext,
  expertId: string,
  actorId: string | null,
): Promise<PayoutRow | null> {
  // Reserve the amount first: a pending row counts as paid for any concurrent run.
  const pending = await ctx.db.write(async (tx) => {
    const currency = (await getPricing(tx)).currency;
    const amount = await unpaidCents(tx, expertId);
    if (amount <= 0) return null;
    const row: PayoutRow = {
      id: crypto.randomUUID(),
      expertId,
      amountCents: amount,
      currency,
      status: "pending",
      stripeAccountId: null,
      stripeTransferId: null,
      failureMessage: null,
      createdBy: actorId,
      createdAt: ctx.now(),
      paidAt: null,
    };
    await tx.insert(payout).values(row).run();
    return row;
  });
  if (!pending) return null;
  return sendPayout(ctx, pending);
}

async function sendPayout(ctx: AppContext, p: PayoutRow): Promise<PayoutRow> {
  try {
    const account = await ensureConnectedAccount(ctx, p.expertId);
    const tr = await ctx.stripe.transfers.create(
      {
        amount: p.amountCents,
        currency: p.currency,
        destination: account,
        description: "Burnline expert earnings",
        metadata: { payoutId: p.id, expertId: p.expertId },
      },
      { idempotencyKey: `payout:${p.id}` },
    );
    const now = ctx.now();
    // a payout retried by two runs at once (same idempotency key, same transfer): recorded once
    const paid = await ctx.db.write(async (tx) => {
      const moved = await tx
        .update(payout)
        .set({ status: "paid", stripeAccountId: account, stripeTransferId: tr.id, paidAt: now, failureMessage: null })
        .where(and(eq(payout.id, p.id), eq(payout.status, "pending")))
        .returning({ id: payout.id })
        .all();
      if (moved.length === 0) return false;
      await recordLedger(tx, {
        key: `payout:${p.id}`,
        kind: "payout",
        amountCents: p.amountCents,
        currency: p.currency,
        expertId: p.expertId,
        payoutId: p.id,
        stripeId: tr.id,
        at: now,
      });
      return true;
    });
    if (paid) await notify(ctx, [p.expertId], notices.payoutSent(p.amountCents, p.currency, tr.id));
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    ctx.logger.error({ err, payoutId: p.id }, "payout failed");
    await ctx.db.write(async (tx) =>
      tx
        .update(payout)
        .set({ status: "failed", failureMessage: message.slice(0, 500) })
        .where(and(eq(payout.id, p.id), eq(payout.status, "pending")))
        .run(),
    );
  }
  return (await ctx.db.read(async (tx) => tx.select().from(payout).where(eq(payout.id, p.id)).get()))!;
}

/** Pay every expert with unpaid earnings (admin button and the daily sweep). Retries pending payouts. */
export async function runPayouts(ctx: AppContext, actorId: string | null, onlyExpertId?: string): Promise<PayoutRow[]> {
  const out: PayoutRow[] = [];
  // A payout still pending after 10 minutes was interrupted (e.g. a restart): send it again with
  // the same idempotency key, so Stripe answers with the transfer it may already have made.
  const stuckBefore = ctx.now().getTime() - 10 * 60_000;
  const { stuck, experts, known } = await ctx.db.read(async (tx) => ({
    stuck: (await tx.select().from(payout).where(eq(payout.status, "pending")).all()).filter(
      (p) => p.createdAt.getTime() < stuckBefore && (!onlyExpertId || p.expertId === onlyExpertId),
    ),
    experts: onlyExpertId
      ? [onlyExpertId]
      : (
          await tx
            .selectDistinct({ id: ledgerEntry.expertId })
            .from(ledgerEntry)
            .where(eq(ledgerEntry.kind, "expert_earning"))
            .all()
        )
          .map((r) => r.id)
          .filter((x): x is string => !!x),
    known: onlyExpertId
      ? !!(await tx.select().from(expertProfile).where(eq(expertProfile.userId, onlyExpertId)).get())
      : true,
  }));
  for (const p of stuck) out.push(await sendPayout(ctx, p));
  if (!known) throw notFound("Expert");
  for (const id of experts) {
    const p = await payoutExpert(ctx, id, actorId);
    if (p) out.push(p);
  }
  return out;
}

const presentPayout = (p: PayoutRow): PayoutView => ({
  id: p.id,
  amountCents: p.amountCents,
  currency: p.currency,
  status: p.status,
  transferId: p.stripeTransferId,
  createdAt: p.createdAt.toISOString(),
  paidAt: p.paidAt?.toISOString() ?? null,
  failureMessage: p.failureMessage,
});

/** GET /api/earnings (the expert's own page). */
export async function getEarnings(ctx: AppContext, expertId: string): Promise<EarningsView> {
  return ctx.db.read(async (tx) => {
    const currency = (await getPricing(tx)).currency;
    const t = await expertTotals(tx, expertId);
    const earnings = await tx
      .select()
      .from(ledgerEntry)
      .where(
        and(
          eq(ledgerEntry.expertId, expertId),
          inArray(ledgerEntry.kind, ["expert_earning", "expert_earning_reversal"]),
        ),
      )
      .all();
    const paymentIds = [...new Set(earnings.map((e) => e.paymentId).filter((x): x is string => !!x))];
    const pays = paymentIds.length
      ? await tx
          .select({ p: schema.payment, c: schema.caseTable })
          .from(schema.payment)
          .innerJoin(schema.caseTable, eq(schema.caseTable.id, schema.payment.caseId))
          .where(inArray(schema.payment.id, paymentIds))
          .all()
      : [];
    const cases = pays
      .map(({ p, c }) => {
        const mine = earnings.filter((e) => e.paymentId === p.id);
        const sum = (kind: string) => mine.filter((e) => e.kind === kind).reduce((s, e) => s + e.amountCents, 0);
        const expertCents = sum("expert_earning");
        return {
          caseId: c.id,
          label: caseLabel(c),
          capturedAt: (p.capturedAt ?? p.updatedAt).toISOString(),
          grossCents: p.amountCents,
          deskCents: p.amountCents - expertCents,
          expertCents,
          reversedCents: sum("expert_earning_reversal"),
          status: c.status,
        };
      })
      .sort((a, b) => b.capturedAt.localeCompare(a.capturedAt));
    const payouts = (
      await tx.select().from(payout).where(eq(payout.expertId, expertId)).orderBy(desc(payout.createdAt)).all()
    ).map(presentPayout);
    const pendingPayoutCents = payouts.filter((p) => p.status === "pending").reduce((s, p) => s + p.amountCents, 0);
    const unpaid = t.earnedCents - t.reversedCents - t.paidCents - pendingPayoutCents;
    return {
      currency,
      totals: {
        earnedCents: t.earnedCents,
        reversedCents: t.reversedCents,
        paidCents: t.paidCents,
        pendingPayoutCents,
        unpaidCents: unpaid,
      },
      cases,
      payouts,
    } satisfies EarningsView;
  });
}

/** Admin overview: each expert's unpaid amount. */
export async function payoutOverview(
  ctx: AppContext,
): Promise<{ expertId: string; name: string; unpaidCents: number; paidCents: number }[]> {
  return ctx.db.read(async (tx) => {
    const experts = await tx
      .select({ id: schema.user.id, name: schema.user.name })
      .from(expertProfile)
      .innerJoin(schema.user, eq(schema.user.id, expertProfile.userId))
      .all();
    const out = [];
    for (const e of experts) {
      const row = {
        expertId: e.id,
        name: e.name,
        unpaidCents: await unpaidCents(tx, e.id),
        paidCents: (await expertTotals(tx, e.id)).paidCents,
      };
      if (row.unpaidCents !== 0 || row.paidCents !== 0) out.push(row);
    }
    return out;
  });
}
