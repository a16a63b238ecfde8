/**
 * submit (the shop): draft → awaiting_payment, or a new attempt while awaiting payment. One open
 * checkout per case: while another submit of the case is still preparing its checkout the answer is
 * 409 `checkout_in_progress`; an earlier attempt whose checkout is open is replaced, and its session
 * is expired at the payment service before the new one is made.
 */
import { and, eq, inArray } from "drizzle-orm";
import type { AppContext } from "../../context";
import type { Actor } from "../../auth/session";
import { schema, type Tx } from "../../db/client";
import { conflict } from "../../http/errors";
import { quoteTier } from "../../services/pricing";
import { openCheckout } from "../../payments/checkout";
import { movePayment, OPEN_CHECKOUT, type PaymentRow } from "../../payments/store";
import { caseLabel } from "../../../shared/domain/case-label";
import type { CheckoutView } from "../../../shared/views/workflow";
import type { Effect } from "../effect";
import { perform } from "../effects";
import { readinessOfRow, recordCaseEvent, transition, updateQueueState } from "../records";
import { authorized } from "./authorized";

/** A checkout still being prepared after this long was interrupted; a new submit replaces it. */
const PREPARING_MS = 2 * 60_000;

async function submitInUnit(
  tx: Tx,
  fx: Effect[],
  actor: Actor,
  caseId: string,
  tierId: string,
  now: Date,
  taxBasisPoints: number,
): Promise<{ p: PaymentRow; label: string }> {
  const { c } = await authorized(tx, actor, "submit", caseId);
  const ready = readinessOfRow(c);
  if (!ready.complete) {
    const what = ready.issues.map((i) => i.message.replace(/\.$/, "")).join("; ");
    throw conflict("case_incomplete", `The case is not ready for the desk: ${what}.`, {
      missing: ready.issues.map((i) => i.path),
      issues: ready.issues,
    });
  }
  const { tier, pricing } = await quoteTier(tx, tierId);
  const open = await tx
    .select()
    .from(schema.payment)
    .where(and(eq(schema.payment.caseId, caseId), inArray(schema.payment.status, [...OPEN_CHECKOUT])))
    .all();
  if (open.some((p) => p.status === "creating" && now.getTime() - p.createdAt.getTime() < PREPARING_MS)) {
    throw conflict(
      "checkout_in_progress",
      "A checkout for this case is being prepared right now; open the case in a moment to pay it.",
    );
  }
  const set = { tier: tier.id, priceCents: tier.priceCents };
  const data = { tier: tier.id, priceCents: tier.priceCents };
  if (c.status === "draft") {
    await transition(tx, {
      caseId,
      from: "draft",
      to: "awaiting_payment",
      actorId: actor.id,
      type: "submitted",
      at: now,
      data,
      set,
    });
  } else {
    await tx
      .update(schema.caseTable)
      .set({ ...set, updatedAt: now })
      .where(eq(schema.caseTable.id, caseId))
      .run();
    await recordCaseEvent(tx, { caseId, actorId: actor.id, type: "payment_restarted", at: now, data });
  }
  const row: PaymentRow = {
    id: crypto.randomUUID(),
    caseId,
    shopId: c.shopId,
    tier: tier.id,
    tierLabel: tier.label,
    amountCents: tier.priceCents,
    currency: pricing.currency,
    deskShareBasisPoints: pricing.deskShareBasisPoints,
    deadlineMinutes: tier.deadlineMinutes,
    taxBasisPoints,
    status: "creating",
    checkoutSessionId: null,
    checkoutUrl: null,
    paymentIntentId: null,
    chargeId: null,
    cardBrand: null,
    cardLast4: null,
    captureBefore: null,
    failureCode: null,
    failureMessage: null,
    createdBy: actor.id,
    createdAt: now,
    updatedAt: now,
    authorizedAt: null,
    capturedAt: null,
    releasedAt: null,
    refundedAt: null,
  };
  await tx.insert(schema.payment).values(row).run();
  // the earlier attempts of this case must not be paid as well
  for (const p of open) {
    await movePayment(tx, p.id, OPEN_CHECKOUT, { status: "expired", updatedAt: now });
    fx.push({ kind: "expireCheckout", paymentId: p.id, why: "replaced" });
  }
  await updateQueueState(tx, caseId, now, { paymentId: row.id, lastPaymentError: null });
  fx.push({ kind: "announce", caseId });
  return { p: row, label: caseLabel(c) };
}

/** POST /api/cases/:id/submit */
export async function submitCase(ctx: AppContext, actor: Actor, caseId: string, tierId: string): Promise<CheckoutView> {
  const taxBp = Math.round(ctx.env.TAX_RATE_PERCENT * 100);
  const { result } = await perform(ctx, (tx, fx) => submitInUnit(tx, fx, actor, caseId, tierId, ctx.now(), taxBp));
  const { p, label } = result;
  const { checkoutUrl } = await openCheckout(ctx, p, `${p.tierLabel} second opinion — ${label}`);
  return {
    checkoutUrl,
    paymentId: p.id,
    tier: p.tier,
    amountCents: p.amountCents,
    currency: p.currency,
    deadlineMinutes: p.deadlineMinutes,
  } satisfies CheckoutView;
}
