/**
 * What happens to the money of a case: capture the hold when the answer is delivered, release it
 * when nobody answers or the shop withdraws, refund a capture, and give the money back whichever
 * state it is in. Each first calls the payment service (outside any unit), then applies its answer
 * with syncPayment and the caller's reaction.
 */
import type { AppContext } from "../context";
import type { PaymentReactor } from "./reconcile";
import {
  cancelIntent,
  captureIntent,
  expireCheckoutSession,
  refundIntent,
  syncPayment,
  type CancelReason,
} from "./stripe-calls";
import { movePayment, OPEN_CHECKOUT, type PaymentRow } from "./store";

/**
 * Captures a held payment. Never at or after the hold's capture_before: the hold is released
 * instead and nothing is charged. Returns whether the money was captured.
 */
export async function captureHold(
  ctx: AppContext,
  p: PaymentRow,
  react: PaymentReactor,
): Promise<{ captured: boolean; status: string }> {
  if (p.status !== "authorized" || !p.paymentIntentId) return { captured: false, status: p.status };
  if (p.captureBefore && ctx.now().getTime() >= p.captureBefore.getTime()) {
    ctx.logger.warn({ caseId: p.caseId, paymentId: p.id }, "hold ended before capture; releasing instead");
    const after = await releaseHold(ctx, p, "abandoned", react);
    return { captured: false, status: after?.status ?? "released" };
  }
  const pi = await captureIntent(ctx, p);
  const after = await syncPayment(ctx, p.id, react, pi);
  return { captured: after?.status === "captured", status: after?.status ?? p.status };
}

/** Cancels a hold (withdrawn, deadline missed, superseded). A payment not held is left alone. */
export async function releaseHold(
  ctx: AppContext,
  p: PaymentRow,
  reason: CancelReason,
  react: PaymentReactor,
): Promise<PaymentRow | undefined> {
  if (p.status !== "authorized" || !p.paymentIntentId) return p;
  const pi = await cancelIntent(ctx, p, reason);
  return syncPayment(ctx, p.id, react, pi);
}

/** Ends an attempt whose checkout was never paid: its session is expired at the payment service. */
export async function abandonCheckout(ctx: AppContext, p: PaymentRow, why: string): Promise<void> {
  await expireCheckoutSession(ctx, p, why);
  await ctx.db.write(async (tx) => movePayment(tx, p.id, OPEN_CHECKOUT, { status: "expired", updatedAt: ctx.now() }));
}

export type MoneyBack =
  | { outcome: "released" | "refunded"; payment: PaymentRow }
  | { outcome: "expired"; payment: PaymentRow }
  | { outcome: "nothing"; payment: PaymentRow | undefined; why: string; error?: unknown };

/**
 * Gives the money of a payment back, whatever happened to it meanwhile: a hold is released; a hold
 * that was captured while we were deciding (the answer's capture racing us) is refunded; a capture
 * is refunded. Returns what was done, read back from the payment service, or why nothing was.
 */
export async function giveMoneyBack(
  ctx: AppContext,
  p: PaymentRow,
  reason: CancelReason,
  react: PaymentReactor,
  note?: string,
): Promise<MoneyBack> {
  if ((OPEN_CHECKOUT as readonly string[]).includes(p.status)) {
    await abandonCheckout(ctx, p, reason);
    return { outcome: "expired", payment: { ...p, status: "expired" } };
  }
  if (!p.paymentIntentId || (p.status !== "authorized" && p.status !== "captured")) {
    return {
      outcome: "nothing",
      payment: p,
      why: `The payment is ${p.status}; there is no held or captured money to give back.`,
    };
  }
  let pi = p.status === "authorized" ? await cancelIntent(ctx, p, reason) : null;
  if (!pi || pi.status === "succeeded") {
    // captured (before, or while we cancelled): refund what was received
    const synced = pi ? await syncPayment(ctx, p.id, react, pi) : p;
    if (synced && synced.status === "captured") pi = await refundIntent(ctx, synced, note);
  }
  const after = await syncPayment(ctx, p.id, react, pi ?? undefined);
  if (after?.status === "released" || after?.status === "refunded") return { outcome: after.status, payment: after };
  return {
    outcome: "nothing",
    payment: after,
    why: `The payment service left the payment ${after?.status ?? "unknown"}${pi ? ` (its intent is ${pi.status})` : ""}; nothing was given back.`,
  };
}
