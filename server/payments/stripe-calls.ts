/**
 * Every call the desk makes to the payment service about a case's money, through the official SDK
 * (ctx.stripe: the local fake in development and tests, Stripe itself with real keys). None of
 * these runs inside a unit of work: each call is made first, then its answer is applied in a unit
 * (syncPayment), with the caller's reaction to what happened.
 *
 * Idempotency keys come from our own ids: customer:<shopId>, checkout:<paymentId>,
 * capture:<paymentId>, cancel:<paymentId>:<reason>, refund:<paymentId>, expire:<sessionId>.
 */
import { and, eq, isNull } from "drizzle-orm";
import Stripe from "stripe";
import type { AppContext } from "../context";
import { schema } from "../db/client";
import { notFound } from "../http/errors";
import { reconcileInTx, type PaymentFact, type PaymentReactor } from "./reconcile";
import { getPayment, type PaymentRow } from "./store";

const { shop } = schema;

export async function fetchIntent(ctx: AppContext, id: string): Promise<Stripe.PaymentIntent> {
  return ctx.stripe.paymentIntents.retrieve(id, { expand: ["latest_charge"] });
}

/** A "no such object" answer of the payment service (an id that is not, or no longer, there). */
export function isMissingObject(err: unknown): boolean {
  return (
    err instanceof Stripe.errors.StripeInvalidRequestError &&
    (err.code === "resource_missing" || err.statusCode === 404)
  );
}

/** The payment service could not be reached or failed on its side (worth retrying later). */
export function isUnreachable(err: unknown): boolean {
  return (
    err instanceof Stripe.errors.StripeConnectionError ||
    err instanceof Stripe.errors.StripeAPIError ||
    ((err as { statusCode?: number } | null)?.statusCode ?? 0) >= 500
  );
}

/** The intent behind an attempt (from its checkout session when we have not seen the intent yet). */
async function intentIdOf(ctx: AppContext, p: PaymentRow): Promise<string | null> {
  if (p.paymentIntentId) return p.paymentIntentId;
  if (!p.checkoutSessionId) return null;
  const s = await ctx.stripe.checkout.sessions.retrieve(p.checkoutSessionId);
  return typeof s.payment_intent === "string" ? s.payment_intent : (s.payment_intent?.id ?? null);
}

/**
 * Brings one payment up to date with the payment service (using `pi` when the caller has just got
 * it) and lets `react` apply the facts to the case in the same unit. Returns the payment after.
 */
export async function syncPayment(
  ctx: AppContext,
  paymentId: string,
  react: PaymentReactor,
  pi?: Stripe.PaymentIntent,
): Promise<PaymentRow | undefined> {
  const p = await ctx.db.read(async (tx) => getPayment(tx, paymentId));
  if (!p) return undefined;
  const intentId = pi?.id ?? (await intentIdOf(ctx, p));
  if (!intentId) return p;
  const fresh = pi && typeof pi.latest_charge === "object" ? pi : await fetchIntent(ctx, intentId);
  return ctx.db.write(async (tx) => {
    const now = ctx.now();
    const current = (await getPayment(tx, paymentId))!;
    const facts: PaymentFact[] = await reconcileInTx(tx, current, fresh, now, ctx.logger);
    if (facts.length) await react(tx, facts, now);
    return (await getPayment(tx, paymentId))!;
  });
}

/** The shop's Stripe customer, created once (idempotency key per shop; stored with a conditional update). */
export async function ensureShopCustomer(ctx: AppContext, shopId: string): Promise<string> {
  const found = await ctx.db.read(async (tx) => {
    const s = await tx.select().from(shop).where(eq(shop.id, shopId)).get();
    const owner = await tx
      .select({ email: schema.user.email })
      .from(schema.user)
      .where(and(eq(schema.user.shopId, shopId), eq(schema.user.role, "owner")))
      .get();
    return { s, owner };
  });
  if (!found.s) throw notFound("Shop");
  if (found.s.stripeCustomerId) return found.s.stripeCustomerId;
  const customer = await ctx.stripe.customers.create(
    { name: found.s.name, ...(found.owner ? { email: found.owner.email } : {}), metadata: { shopId } },
    { idempotencyKey: `customer:${shopId}` },
  );
  return ctx.db.write(async (tx) => {
    await tx
      .update(shop)
      .set({ stripeCustomerId: customer.id })
      .where(and(eq(shop.id, shopId), isNull(shop.stripeCustomerId)))
      .run();
    return (await tx.select({ id: shop.stripeCustomerId }).from(shop).where(eq(shop.id, shopId)).get())!.id!;
  });
}

export interface CheckoutRequest {
  payment: PaymentRow;
  customer: string;
  productName: string;
  casePath: string;
}

/** A Checkout Session for one attempt, with a manual-capture PaymentIntent. */
export async function createCheckoutSession(ctx: AppContext, r: CheckoutRequest): Promise<Stripe.Checkout.Session> {
  const base = ctx.env.publicUrl.replace(/\/+$/, "");
  const p = r.payment;
  return ctx.stripe.checkout.sessions.create(
    {
      mode: "payment",
      customer: r.customer,
      client_reference_id: p.caseId,
      line_items: [
        {
          quantity: 1,
          price_data: {
            currency: p.currency,
            unit_amount: p.amountCents,
            product_data: { name: r.productName.slice(0, 250) },
          },
        },
      ],
      payment_intent_data: {
        capture_method: "manual",
        description: `Burnline case ${p.caseId}`,
        metadata: { caseId: p.caseId, paymentId: p.id, shopId: p.shopId, tier: p.tier },
      },
      metadata: { caseId: p.caseId, paymentId: p.id },
      success_url: `${base}${r.casePath}?paid=1&session_id={CHECKOUT_SESSION_ID}`,
      cancel_url: `${base}${r.casePath}?paid=0`,
    },
    { idempotencyKey: `checkout:${p.id}` },
  );
}

/** Expires an attempt's open Checkout Session at the payment service, so it can no longer be paid. */
export async function expireCheckoutSession(ctx: AppContext, p: PaymentRow, why: string): Promise<void> {
  if (!p.checkoutSessionId) return;
  try {
    const s = await ctx.stripe.checkout.sessions.retrieve(p.checkoutSessionId);
    if (s.status === "open")
      await ctx.stripe.checkout.sessions.expire(
        p.checkoutSessionId,
        {},
        { idempotencyKey: `expire:${p.checkoutSessionId}` },
      );
  } catch (err) {
    ctx.logger.warn({ err, paymentId: p.id, why }, "could not expire a checkout session");
  }
}

/** Captures a held payment (never at or after its capture_before: then nothing is called). */
export async function captureIntent(ctx: AppContext, p: PaymentRow): Promise<Stripe.PaymentIntent> {
  try {
    return await ctx.stripe.paymentIntents.capture(
      p.paymentIntentId!,
      { expand: ["latest_charge"] },
      { idempotencyKey: `capture:${p.id}` },
    );
  } catch (err) {
    ctx.logger.warn({ err, paymentId: p.id }, "capture refused; reading the intent as it is");
    return fetchIntent(ctx, p.paymentIntentId!);
  }
}

export type CancelReason = "abandoned" | "duplicate" | "requested_by_customer";

/** Cancels a hold; when the payment service refuses, the intent as it now is. */
export async function cancelIntent(
  ctx: AppContext,
  p: PaymentRow,
  reason: CancelReason,
): Promise<Stripe.PaymentIntent> {
  try {
    return await ctx.stripe.paymentIntents.cancel(
      p.paymentIntentId!,
      { cancellation_reason: reason, expand: ["latest_charge"] },
      { idempotencyKey: `cancel:${p.id}:${reason}` },
    );
  } catch (err) {
    ctx.logger.warn({ err, paymentId: p.id }, "cancel refused; reading the intent as it is");
    return fetchIntent(ctx, p.paymentIntentId!);
  }
}

/** Refunds a captured payment in full; then the intent as it now is. */
export async function refundIntent(ctx: AppContext, p: PaymentRow, note?: string): Promise<Stripe.PaymentIntent> {
  await ctx.stripe.refunds.create(
    {
      payment_intent: p.paymentIntentId!,
      reason: "requested_by_customer",
      metadata: { paymentId: p.id, caseId: p.caseId, ...(note ? { note: note.slice(0, 400) } : {}) },
    },
    { idempotencyKey: `refund:${p.id}` },
  );
  return fetchIntent(ctx, p.paymentIntentId!);
}
