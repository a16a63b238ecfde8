/**
 * Payment of a case through the official Stripe SDK (ctx.stripe: the local fake in development and
 * tests, Stripe itself when real keys are configured).
 *
 * - Submit: one Stripe customer per shop (created once), then a Checkout Session whose
 *   PaymentIntent uses manual capture: the card is authorised at payment, captured when the expert
 *   answers, cancelled when the desk misses the deadline or the shop withdraws before a claim.
 *   Every create call carries an idempotency key derived from our own row ids.
 * - Webhooks: each event id is stored in the same transaction that applies it, so an event applies
 *   exactly once even when delivered twice at the same moment. Handlers do not trust the event's
 *   copy of the object: they re-fetch the PaymentIntent and move our payment forward only
 *   (pending → authorized → captured/released → refunded), so events arriving in any order give the
 *   same result.
 * - A capture is never attempted at or after the charge's `capture_before`.
 */
import { and, desc, eq, inArray, isNull, ne, sql } from "drizzle-orm";
import type Stripe from "stripe";
import type { AppContext } from "../context";
import { schema } from "../db/client";
import type { Actor } from "../auth/session";
import { HttpError, conflict, notFound } from "../http/errors";
import { formatCents, splitBetween, splitCents } from "../../shared/domain/money";
import { ledgerBalance, recordLedger } from "./ledger";
import { quoteTier } from "./pricing";
import {
  announceCase,
  caseLabel,
  loadCase,
  queueState,
  recordEvent,
  requireCase,
  shopOwners,
  shopRecipients,
  transitionCase,
  updateQueueState,
  type CaseRow,
  type DbLike,
  type Tx,
} from "./case-state";
import { notify } from "./notifications";
import { createOffers, notifyOffers } from "./queue";
import { assertQueueAction, expertProfileOf } from "../auth/policies/queue";
import type { PaymentView, ReceiptView } from "../../shared/views/queue";
export type { PaymentView, ReceiptView };

export type PaymentRow = typeof schema.payment.$inferSelect;
export type PaymentStatus = "creating" | "pending" | "failed" | "expired" | "authorized" | "captured" | "released" | "refunded";

const { payment, shop, stripeEvent } = schema;

/** How far along a payment is; a payment only ever moves to a higher rank. */
const RANK: Record<PaymentStatus, number> = { creating: 0, pending: 1, failed: 1, expired: 1, authorized: 2, captured: 3, released: 3, refunded: 4 };
const rank = (s: string) => RANK[s as PaymentStatus] ?? 0;

// ---------------------------------------------------------------------------------------------
// Effects: what to do after a transaction commits (mails, realtime, calls to Stripe).

export type Effect =
  | { kind: "queued"; caseId: string; paymentId: string; offered: string[] }
  | { kind: "orphan"; paymentId: string }
  | { kind: "payment_failed"; caseId: string; paymentId: string; message: string }
  | { kind: "released"; caseId: string; paymentId: string; holdLapsed: boolean }
  | { kind: "captured"; caseId: string; paymentId: string }
  | { kind: "refunded"; caseId: string; paymentId: string; amountCents: number }
  | { kind: "announce"; caseId: string };

// ---------------------------------------------------------------------------------------------
// Reading

export function getPayment(db: DbLike, id: string): PaymentRow | undefined {
  return db.select().from(payment).where(eq(payment.id, id)).get();
}

/** The payment attempt that counts for a case (the latest submit). */
export function currentPayment(db: DbLike, caseId: string): PaymentRow | undefined {
  const qs = db.select().from(schema.caseQueueState).where(eq(schema.caseQueueState.caseId, caseId)).get();
  if (qs?.paymentId) return getPayment(db, qs.paymentId);
  return undefined;
}

function findPayment(db: DbLike, ref: { paymentId?: string | null; paymentIntentId?: string | null; sessionId?: string | null }): PaymentRow | undefined {
  if (ref.paymentIntentId) {
    const p = db.select().from(payment).where(eq(payment.paymentIntentId, ref.paymentIntentId)).get();
    if (p) return p;
  }
  if (ref.sessionId) {
    const p = db.select().from(payment).where(eq(payment.checkoutSessionId, ref.sessionId)).get();
    if (p) return p;
  }
  if (ref.paymentId) return getPayment(db, ref.paymentId);
  return undefined;
}

// ---------------------------------------------------------------------------------------------
// Customer per shop

/** The shop's Stripe customer, created once (idempotency key per shop; the id is stored with a conditional update). */
export async function ensureShopCustomer(ctx: AppContext, shopId: string): Promise<string> {
  const s = ctx.db.select().from(shop).where(eq(shop.id, shopId)).get();
  if (!s) throw notFound("Shop");
  if (s.stripeCustomerId) return s.stripeCustomerId;
  const owner = ctx.db
    .select({ email: schema.user.email })
    .from(schema.user)
    .where(and(eq(schema.user.shopId, shopId), eq(schema.user.role, "owner")))
    .get();
  const customer = await ctx.stripe.customers.create(
    { name: s.name, ...(owner ? { email: owner.email } : {}), metadata: { shopId } },
    { idempotencyKey: `customer:${shopId}` },
  );
  ctx.db.update(shop).set({ stripeCustomerId: customer.id }).where(and(eq(shop.id, shopId), isNull(shop.stripeCustomerId))).run();
  return ctx.db.select({ id: shop.stripeCustomerId }).from(shop).where(eq(shop.id, shopId)).get()!.id!;
}

// ---------------------------------------------------------------------------------------------
// Submit

export interface CheckoutStarted {
  checkoutUrl: string;
  paymentId: string;
  tier: string;
  amountCents: number;
  currency: string;
  deadlineMinutes: number;
}

/** What a case needs before it can be sent to the queue (routing uses the system). */
export function missingForSubmit(c: CaseRow): string[] {
  const missing: string[] = [];
  if (!c.system) missing.push("system");
  if (!c.complaint || !c.complaint.trim()) missing.push("complaint");
  return missing;
}

/**
 * POST /api/cases/:id/submit: draft → awaiting_payment (or a new attempt while awaiting payment),
 * a payment row, the shop's customer and a Checkout Session with manual capture.
 */
export async function startCheckout(ctx: AppContext, actor: Actor, caseId: string, tierId: string): Promise<CheckoutStarted> {
  const now = ctx.now();
  const c = loadCase(ctx.db, caseId);
  assertQueueAction(actor, c, expertProfileOf(ctx.db, actor), "submit");
  const missing = missingForSubmit(c);
  if (missing.length) {
    throw conflict("case_incomplete", `Fill in the ${missing.join(" and ")} before submitting; the desk routes cases by them.`, { missing });
  }
  const { tier, pricing } = quoteTier(ctx.db, tierId, now);
  const paymentId = crypto.randomUUID();

  const previous = ctx.db.transaction((tx) => {
    const cur = requireCase(tx, caseId);
    const set = { tier: tier.id, priceCents: tier.priceCents };
    if (cur.status === "draft") {
      transitionCase(tx, { caseId, from: "draft", to: "awaiting_payment", actorId: actor.id, type: "submitted", at: now, data: { tier: tier.id, priceCents: tier.priceCents }, set });
    } else if (cur.status === "awaiting_payment") {
      tx.update(schema.caseTable).set({ ...set, updatedAt: now }).where(eq(schema.caseTable.id, caseId)).run();
      recordEvent(tx, { caseId, actorId: actor.id, type: "payment_restarted", at: now, data: { tier: tier.id, priceCents: tier.priceCents } });
    } else {
      throw conflict("invalid_transition", "This case has already been paid for and submitted.", { status: cur.status });
    }
    tx.insert(payment)
      .values({
        id: paymentId,
        caseId,
        shopId: cur.shopId,
        tier: tier.id,
        tierLabel: tier.label,
        amountCents: tier.priceCents,
        currency: pricing.currency,
        deskShareBasisPoints: pricing.deskShareBasisPoints,
        deadlineMinutes: tier.deadlineMinutes,
        status: "creating",
        createdBy: actor.id,
        createdAt: now,
        updatedAt: now,
      })
      .run();
    const prev = tx
      .select()
      .from(payment)
      .where(and(eq(payment.caseId, caseId), ne(payment.id, paymentId), inArray(payment.status, ["creating", "pending", "failed"])))
      .all();
    updateQueueState(tx, caseId, now, { paymentId, lastPaymentError: null });
    return prev;
  });
  announceCase(ctx, caseId);

  // An earlier checkout of this case must not be paid as well.
  for (const p of previous) await abandonCheckout(ctx, p, "replaced");

  try {
    const customer = await ensureShopCustomer(ctx, c.shopId);
    const base = ctx.env.publicUrl.replace(/\/+$/, "");
    const casePath = `/cases/${encodeURIComponent(caseId)}`;
    const session = await ctx.stripe.checkout.sessions.create(
      {
        mode: "payment",
        customer,
        client_reference_id: caseId,
        line_items: [
          {
            quantity: 1,
            price_data: {
              currency: pricing.currency,
              unit_amount: tier.priceCents,
              product_data: { name: `${tier.label} second opinion — ${caseLabel(c)}`.slice(0, 250) },
            },
          },
        ],
        payment_intent_data: {
          capture_method: "manual",
          description: `Burnline case ${caseId}`,
          metadata: { caseId, paymentId, shopId: c.shopId, tier: tier.id },
        },
        metadata: { caseId, paymentId },
        success_url: `${base}${casePath}?paid=1&session_id={CHECKOUT_SESSION_ID}`,
        cancel_url: `${base}${casePath}?paid=0`,
      },
      { idempotencyKey: `checkout:${paymentId}` },
    );
    ctx.db
      .update(payment)
      .set({ status: "pending", checkoutSessionId: session.id, checkoutUrl: session.url, updatedAt: ctx.now() })
      .where(and(eq(payment.id, paymentId), eq(payment.status, "creating")))
      .run();
    return { checkoutUrl: session.url!, paymentId, tier: tier.id, amountCents: tier.priceCents, currency: pricing.currency, deadlineMinutes: tier.deadlineMinutes };
  } catch (err) {
    ctx.logger.error({ err, caseId }, "checkout session could not be created");
    const message = "The payment service did not answer. Nothing was charged; try again in a moment.";
    ctx.db.update(payment).set({ status: "failed", failureCode: "checkout_unavailable", failureMessage: message, updatedAt: ctx.now() }).where(eq(payment.id, paymentId)).run();
    throw new HttpError(502, "payment_unavailable", message);
  }
}

/** Expire an open Checkout Session of an attempt that no longer counts, and mark it expired. */
async function abandonCheckout(ctx: AppContext, p: PaymentRow, why: string): Promise<void> {
  if (p.checkoutSessionId) {
    try {
      const s = await ctx.stripe.checkout.sessions.retrieve(p.checkoutSessionId);
      if (s.status === "open") await ctx.stripe.checkout.sessions.expire(p.checkoutSessionId, {}, { idempotencyKey: `expire:${p.checkoutSessionId}` });
    } catch (err) {
      ctx.logger.warn({ err, paymentId: p.id, why }, "could not expire an earlier checkout");
    }
  }
  ctx.db
    .update(payment)
    .set({ status: "expired", updatedAt: ctx.now() })
    .where(and(eq(payment.id, p.id), inArray(payment.status, ["creating", "pending", "failed"])))
    .run();
}

// ---------------------------------------------------------------------------------------------
// Reconciling our payment with the PaymentIntent as Stripe has it now

function chargeOf(pi: Stripe.PaymentIntent): Stripe.Charge | null {
  return pi.latest_charge && typeof pi.latest_charge === "object" ? pi.latest_charge : null;
}

/** A message a technician understands, from Stripe's last_payment_error. */
export function paymentErrorMessage(err: Stripe.PaymentIntent.LastPaymentError | null | undefined): string {
  const code = err?.decline_code ?? err?.code ?? "";
  const reason =
    code === "insufficient_funds"
      ? "the card was declined for insufficient funds"
      : code === "expired_card"
        ? "the card has expired"
        : code === "incorrect_cvc"
          ? "the security code (CVC) is wrong"
          : code === "incorrect_number" || code === "invalid_number"
            ? "the card number is wrong"
            : code === "processing_error"
              ? "the card could not be processed"
              : "the card was declined by the bank";
  return `Payment did not go through: ${reason}. Nothing was charged and the case is not in the queue yet. Try again with another card.`;
}

/**
 * Move `p` forward to match `pi` (fetched from Stripe just now). Runs inside `tx`; pushes what to do
 * after the commit onto `effects`. Idempotent: applying the same PaymentIntent again changes nothing.
 */
export function reconcileInTx(ctx: AppContext, tx: Tx, p0: PaymentRow, pi: Stripe.PaymentIntent, effects: Effect[], now: Date): void {
  let p = getPayment(tx, p0.id)!;
  if (!p.paymentIntentId) {
    tx.update(payment).set({ paymentIntentId: pi.id, updatedAt: now }).where(eq(payment.id, p.id)).run();
    p = { ...p, paymentIntentId: pi.id };
  }
  const charge = chargeOf(pi);

  if (pi.status === "requires_payment_method" || pi.status === "requires_confirmation" || pi.status === "requires_action") {
    if (pi.last_payment_error && rank(p.status) <= 1 && p.status !== "expired") {
      const message = paymentErrorMessage(pi.last_payment_error);
      const code = pi.last_payment_error.decline_code ?? pi.last_payment_error.code ?? "card_declined";
      if (p.status !== "failed" || p.failureMessage !== message) {
        tx.update(payment).set({ status: "failed", failureCode: code, failureMessage: message, updatedAt: now }).where(eq(payment.id, p.id)).run();
        const qs = queueState(tx, p.caseId, now);
        if (qs.paymentId === p.id) {
          updateQueueState(tx, p.caseId, now, { lastPaymentError: message });
          recordEvent(tx, { caseId: p.caseId, actorId: null, type: "payment_failed", at: now, data: { code, paymentId: p.id } });
          effects.push({ kind: "payment_failed", caseId: p.caseId, paymentId: p.id, message });
        }
      }
    }
    return;
  }

  if (pi.status === "requires_capture" || pi.status === "succeeded" || (pi.status === "canceled" && p.status === "authorized")) {
    if (rank(p.status) < 2 && pi.status === "requires_capture") authorizeInTx(ctx, tx, p, pi, charge, effects, now);
  }
  p = getPayment(tx, p.id)!;

  if (pi.status === "succeeded" && p.status === "authorized") {
    recordCaptureInTx(tx, p, pi.amount_received, pi.id, effects, now);
    p = getPayment(tx, p.id)!;
  }

  if (pi.status === "canceled") {
    if (p.status === "authorized") {
      releaseInTx(tx, p, pi, effects, now);
    } else if (rank(p.status) < 2 && p.status !== "expired") {
      tx.update(payment).set({ status: "expired", updatedAt: now }).where(eq(payment.id, p.id)).run();
    }
    return;
  }

  // Refunds after capture (ours, or made by the desk in Stripe's dashboard).
  if (charge && (p.status === "captured" || p.status === "refunded") && charge.amount_refunded > 0) {
    recordRefundsInTx(tx, p, charge, effects, now);
  }
}

function authorizeInTx(ctx: AppContext, tx: Tx, p: PaymentRow, pi: Stripe.PaymentIntent, charge: Stripe.Charge | null, effects: Effect[], now: Date): void {
  if (pi.amount !== p.amountCents) ctx.logger.warn({ paymentId: p.id, pi: pi.id, amount: pi.amount, expected: p.amountCents }, "authorised amount differs from the price");
  const card = charge?.payment_method_details?.card;
  const captureBefore = card?.capture_before ? new Date(card.capture_before * 1000) : null;
  tx.update(payment)
    .set({
      status: "authorized",
      paymentIntentId: pi.id,
      chargeId: charge?.id ?? (typeof pi.latest_charge === "string" ? pi.latest_charge : null),
      cardLast4: card?.last4 ?? null,
      cardBrand: card?.brand ?? null,
      captureBefore,
      failureCode: null,
      failureMessage: null,
      authorizedAt: now,
      updatedAt: now,
    })
    .where(eq(payment.id, p.id))
    .run();
  recordLedger(tx, { key: `authorization:${p.id}`, kind: "authorization", amountCents: p.amountCents, currency: p.currency, caseId: p.caseId, paymentId: p.id, stripeId: pi.id, at: now });

  const c = loadCase(tx, p.caseId);
  const qs = queueState(tx, p.caseId, now);
  if (c && c.status === "awaiting_payment" && qs.paymentId === p.id) {
    const deadlineAt = new Date(now.getTime() + p.deadlineMinutes * 60_000);
    const { row } = transitionCase(tx, {
      caseId: c.id,
      from: "awaiting_payment",
      to: "queued",
      actorId: null,
      type: "payment_authorized",
      at: now,
      data: { paymentId: p.id, amountCents: p.amountCents, currency: p.currency, tier: p.tier, deadlineAt: deadlineAt.toISOString() },
      set: { tier: p.tier, priceCents: p.amountCents, deadlineAt, submittedAt: now },
    });
    updateQueueState(tx, c.id, now, { queuedAt: now, lastPaymentError: null, offersWidenedAt: null, deadlineWarnedAt: null });
    const offered = createOffers(tx, row, now);
    effects.push({ kind: "queued", caseId: c.id, paymentId: p.id, offered });
  } else {
    // Paid twice, or paid for a case that was withdrawn meanwhile: give the hold back.
    recordEvent(tx, { caseId: p.caseId, actorId: null, type: "payment_superseded", at: now, data: { paymentId: p.id, status: c?.status ?? null } });
    effects.push({ kind: "orphan", paymentId: p.id });
  }
}

function recordCaptureInTx(tx: Tx, p: PaymentRow, amount: number, piId: string, effects: Effect[], now: Date): void {
  const c = loadCase(tx, p.caseId);
  const captured = amount > 0 ? amount : p.amountCents;
  const { deskCents, expertCents } = splitCents(captured, p.deskShareBasisPoints);
  tx.update(payment).set({ status: "captured", capturedAt: now, updatedAt: now }).where(eq(payment.id, p.id)).run();
  const base = { currency: p.currency, caseId: p.caseId, paymentId: p.id, stripeId: piId, at: now };
  recordLedger(tx, { ...base, key: `capture:${p.id}`, kind: "capture", amountCents: captured });
  if (captured < p.amountCents) recordLedger(tx, { ...base, key: `release:${p.id}`, kind: "release", amountCents: p.amountCents - captured, note: "uncaptured remainder" });
  recordLedger(tx, { ...base, key: `desk_share:${p.id}`, kind: "desk_share", amountCents: deskCents });
  recordLedger(tx, { ...base, key: `expert_earning:${p.id}`, kind: "expert_earning", amountCents: expertCents, expertId: c?.expertId ?? null });
  recordEvent(tx, { caseId: p.caseId, actorId: null, type: "payment_captured", at: now, data: { paymentId: p.id, amountCents: captured, deskCents, expertCents } });
  effects.push({ kind: "captured", caseId: p.caseId, paymentId: p.id });
}

function releaseInTx(tx: Tx, p: PaymentRow, pi: Stripe.PaymentIntent, effects: Effect[], now: Date): void {
  tx.update(payment).set({ status: "released", releasedAt: now, updatedAt: now }).where(eq(payment.id, p.id)).run();
  recordLedger(tx, { key: `release:${p.id}`, kind: "release", amountCents: p.amountCents, currency: p.currency, caseId: p.caseId, paymentId: p.id, stripeId: pi.id, at: now, note: pi.cancellation_reason ?? null });
  const lapsed = pi.cancellation_reason === "automatic";
  recordEvent(tx, { caseId: p.caseId, actorId: null, type: "payment_released", at: now, data: { paymentId: p.id, amountCents: p.amountCents, reason: pi.cancellation_reason ?? null } });
  // A hold that lapsed on Stripe's side while the case still waited for its answer: nothing can be
  // charged any more, so the case ends as refunded.
  const c = loadCase(tx, p.caseId);
  const qs = queueState(tx, p.caseId, now);
  let holdLapsed = false;
  if (c && qs.paymentId === p.id && (c.status === "queued" || c.status === "claimed" || c.status === "needs_data")) {
    transitionCase(tx, { caseId: c.id, from: c.status as "queued", to: "refunded", actorId: null, type: lapsed ? "hold_lapsed" : "hold_cancelled", at: now, data: { paymentId: p.id } });
    holdLapsed = true;
  }
  effects.push({ kind: "released", caseId: p.caseId, paymentId: p.id, holdLapsed });
}

function recordRefundsInTx(tx: Tx, p: PaymentRow, charge: Stripe.Charge, effects: Effect[], now: Date): void {
  const already = Number(
    tx
      .select({ t: sql<number>`coalesce(sum(${schema.ledgerEntry.amountCents}), 0)` })
      .from(schema.ledgerEntry)
      .where(and(eq(schema.ledgerEntry.paymentId, p.id), eq(schema.ledgerEntry.kind, "refund")))
      .get()?.t ?? 0,
  );
  const delta = charge.amount_refunded - already;
  if (delta <= 0) return;
  const c = loadCase(tx, p.caseId);
  // cumulative, so partial refunds reverse exactly the shares taken at capture, to the cent
  const { deskCents, expertCents } = splitBetween(already, charge.amount_refunded, p.deskShareBasisPoints);
  const base = { currency: p.currency, caseId: p.caseId, paymentId: p.id, stripeId: charge.id, at: now };
  const upto = charge.amount_refunded;
  recordLedger(tx, { ...base, key: `refund:${p.id}:${upto}`, kind: "refund", amountCents: delta });
  recordLedger(tx, { ...base, key: `desk_share_reversal:${p.id}:${upto}`, kind: "desk_share_reversal", amountCents: deskCents });
  recordLedger(tx, { ...base, key: `expert_earning_reversal:${p.id}:${upto}`, kind: "expert_earning_reversal", amountCents: expertCents, expertId: c?.expertId ?? null });
  const capturedCents = Number(
    tx
      .select({ t: sql<number>`coalesce(sum(${schema.ledgerEntry.amountCents}), 0)` })
      .from(schema.ledgerEntry)
      .where(and(eq(schema.ledgerEntry.paymentId, p.id), eq(schema.ledgerEntry.kind, "capture")))
      .get()?.t ?? 0,
  );
  if (upto >= capturedCents) tx.update(payment).set({ status: "refunded", refundedAt: now, updatedAt: now }).where(eq(payment.id, p.id)).run();
  recordEvent(tx, { caseId: p.caseId, actorId: null, type: "payment_refunded", at: now, data: { paymentId: p.id, amountCents: delta } });
  effects.push({ kind: "refunded", caseId: p.caseId, paymentId: p.id, amountCents: delta });
}

async function fetchIntent(ctx: AppContext, id: string): Promise<Stripe.PaymentIntent> {
  return ctx.stripe.paymentIntents.retrieve(id, { expand: ["latest_charge"] });
}

/** Reconcile one payment with Stripe now (outside any webhook). */
export async function reconcilePayment(ctx: AppContext, paymentId: string, pi?: Stripe.PaymentIntent): Promise<PaymentRow | undefined> {
  const p = getPayment(ctx.db, paymentId);
  if (!p) return undefined;
  let intentId = p.paymentIntentId;
  if (!intentId && p.checkoutSessionId) {
    const s = await ctx.stripe.checkout.sessions.retrieve(p.checkoutSessionId);
    intentId = typeof s.payment_intent === "string" ? s.payment_intent : (s.payment_intent?.id ?? null);
  }
  if (!intentId) return p;
  const fresh = pi && typeof pi.latest_charge === "object" ? pi : await fetchIntent(ctx, intentId);
  const effects: Effect[] = [];
  const now = ctx.now();
  ctx.db.transaction((tx) => reconcileInTx(ctx, tx, p, fresh, effects, now));
  await runEffects(ctx, effects);
  return getPayment(ctx.db, paymentId);
}

// ---------------------------------------------------------------------------------------------
// Webhook events

export type EventOutcome = "applied" | "duplicate" | "ignored";

const INTENT_EVENTS = new Set([
  "payment_intent.amount_capturable_updated",
  "payment_intent.payment_failed",
  "payment_intent.succeeded",
  "payment_intent.canceled",
  "payment_intent.created",
  "payment_intent.processing",
  "payment_intent.requires_action",
]);
const CHARGE_EVENTS = new Set(["charge.succeeded", "charge.failed", "charge.captured", "charge.expired", "charge.refunded", "charge.updated"]);
const SESSION_EVENTS = new Set(["checkout.session.completed", "checkout.session.expired", "checkout.session.async_payment_succeeded", "checkout.session.async_payment_failed"]);

/** Apply one verified Stripe event exactly once. Throws (→ 500, Stripe retries) when Stripe cannot be reached. */
export async function applyStripeEvent(ctx: AppContext, event: Stripe.Event): Promise<EventOutcome> {
  if (ctx.db.select({ id: stripeEvent.id }).from(stripeEvent).where(eq(stripeEvent.id, event.id)).get()) return "duplicate";
  const obj = event.data.object as unknown as { id: string; object: string; payment_intent?: string | { id: string } | null; metadata?: Record<string, string> };
  let pi: Stripe.PaymentIntent | null = null;
  let sessionId: string | null = null;
  let metaPaymentId: string | null = obj.metadata?.paymentId ?? null;

  if (SESSION_EVENTS.has(event.type)) {
    sessionId = obj.id;
    const s = await ctx.stripe.checkout.sessions.retrieve(obj.id);
    metaPaymentId = s.metadata?.paymentId ?? metaPaymentId;
    const intentId = typeof s.payment_intent === "string" ? s.payment_intent : (s.payment_intent?.id ?? null);
    if (intentId) pi = await fetchIntent(ctx, intentId);
  } else if (INTENT_EVENTS.has(event.type)) {
    pi = await fetchIntent(ctx, obj.id);
  } else if (CHARGE_EVENTS.has(event.type) && obj.payment_intent) {
    pi = await fetchIntent(ctx, typeof obj.payment_intent === "string" ? obj.payment_intent : obj.payment_intent.id);
  }

  const now = ctx.now();
  const effects: Effect[] = [];
  const outcome = ctx.db.transaction((tx): EventOutcome => {
    const inserted = tx
      .insert(stripeEvent)
      .values({ id: event.id, type: event.type, objectId: obj.id ?? null, outcome: "applied", receivedAt: now })
      .onConflictDoNothing()
      .run();
    if (inserted.changes === 0) return "duplicate";
    const p = findPayment(tx, { paymentIntentId: pi?.id ?? null, sessionId, paymentId: pi?.metadata?.paymentId ?? metaPaymentId });
    if (!p || (!pi && event.type !== "checkout.session.expired")) {
      tx.update(stripeEvent).set({ outcome: "ignored" }).where(eq(stripeEvent.id, event.id)).run();
      return "ignored";
    }
    if (pi) reconcileInTx(ctx, tx, p, pi, effects, now);
    else if (event.type === "checkout.session.expired" && rank(p.status) < 2 && p.status !== "expired") {
      tx.update(payment).set({ status: "expired", updatedAt: now }).where(eq(payment.id, p.id)).run();
    }
    return "applied";
  });
  if (outcome === "applied") await runEffects(ctx, effects);
  return outcome;
}

// ---------------------------------------------------------------------------------------------
// Capture, cancel, refund

/**
 * Capture the case's held payment (after the answer). Never at or after the hold's capture_before:
 * then the hold is released instead and nothing is charged.
 */
export async function captureCasePayment(ctx: AppContext, caseId: string): Promise<{ captured: boolean; reason?: string }> {
  const p = currentPayment(ctx.db, caseId);
  if (!p || p.status !== "authorized" || !p.paymentIntentId) return { captured: false, reason: p ? `payment is ${p.status}` : "no payment" };
  if (p.captureBefore && ctx.now().getTime() >= p.captureBefore.getTime()) {
    ctx.logger.warn({ caseId, paymentId: p.id }, "hold ended before capture; releasing instead");
    await releaseHold(ctx, p.id, "abandoned");
    return { captured: false, reason: "hold_expired" };
  }
  let pi: Stripe.PaymentIntent;
  try {
    pi = await ctx.stripe.paymentIntents.capture(p.paymentIntentId, { expand: ["latest_charge"] }, { idempotencyKey: `capture:${p.id}` });
  } catch (err) {
    ctx.logger.warn({ err, caseId, paymentId: p.id }, "capture refused; reconciling with Stripe");
    pi = await fetchIntent(ctx, p.paymentIntentId);
  }
  const after = await reconcilePayment(ctx, p.id, pi);
  return { captured: after?.status === "captured", reason: after?.status };
}

/** Cancel a held payment (withdrawn, deadline missed, superseded). A payment not held is left alone. */
export async function releaseHold(ctx: AppContext, paymentId: string, reason: "abandoned" | "duplicate" | "requested_by_customer"): Promise<void> {
  const p = getPayment(ctx.db, paymentId);
  if (!p || p.status !== "authorized" || !p.paymentIntentId) return;
  let pi: Stripe.PaymentIntent;
  try {
    pi = await ctx.stripe.paymentIntents.cancel(p.paymentIntentId, { cancellation_reason: reason, expand: ["latest_charge"] }, { idempotencyKey: `cancel:${p.id}:${reason}` });
  } catch (err) {
    ctx.logger.warn({ err, paymentId }, "cancel refused; reconciling with Stripe");
    pi = await fetchIntent(ctx, p.paymentIntentId);
  }
  await reconcilePayment(ctx, p.id, pi);
}

/** Refund a captured payment in full (admin). */
export async function refundPayment(ctx: AppContext, paymentId: string, note?: string): Promise<void> {
  const p = getPayment(ctx.db, paymentId);
  if (!p || !p.paymentIntentId) throw notFound("Payment");
  if (p.status !== "captured") throw conflict("not_refundable", `Only a captured payment can be refunded; this one is ${p.status}.`);
  await ctx.stripe.refunds.create(
    { payment_intent: p.paymentIntentId, reason: "requested_by_customer", metadata: { paymentId: p.id, caseId: p.caseId, ...(note ? { note: note.slice(0, 400) } : {}) } },
    { idempotencyKey: `refund:${p.id}` },
  );
  await reconcilePayment(ctx, p.id);
}

/** Give the money of a case back: release the hold, or refund when it was captured. */
export async function returnCaseMoney(ctx: AppContext, caseId: string, reason: "abandoned" | "requested_by_customer"): Promise<void> {
  const p = currentPayment(ctx.db, caseId);
  if (!p) return;
  if (p.status === "authorized") await releaseHold(ctx, p.id, reason);
  else if (p.status === "captured") await refundPayment(ctx, p.id, reason);
  else if (p.status === "pending" || p.status === "failed" || p.status === "creating") await abandonCheckout(ctx, p, reason);
}

/** Every payment of a case that still holds money it should not (superseded attempts). */
export async function releaseStrayHolds(ctx: AppContext, caseId: string): Promise<void> {
  const current = currentPayment(ctx.db, caseId);
  const stray = ctx.db
    .select()
    .from(payment)
    .where(and(eq(payment.caseId, caseId), eq(payment.status, "authorized")))
    .all()
    .filter((p) => p.id !== current?.id);
  for (const p of stray) await releaseHold(ctx, p.id, "duplicate");
}

// ---------------------------------------------------------------------------------------------
// After-commit effects

export async function runEffects(ctx: AppContext, effects: Effect[]): Promise<void> {
  for (const e of effects) {
    try {
      await runEffect(ctx, e);
    } catch (err) {
      ctx.logger.error({ err, effect: e.kind }, "payment follow-up failed");
    }
  }
}

async function runEffect(ctx: AppContext, e: Effect): Promise<void> {
  if (e.kind === "orphan") {
    await releaseHold(ctx, e.paymentId, "duplicate");
    return;
  }
  if (e.kind === "announce") return announceCase(ctx, e.caseId);
  const c = loadCase(ctx.db, e.caseId);
  const p = getPayment(ctx.db, e.paymentId);
  if (!c || !p) return;
  announceCase(ctx, c.id);
  const label = caseLabel(c);
  const link = `/cases/${c.id}`;
  const amount = formatCents(p.amountCents, p.currency.toUpperCase());
  switch (e.kind) {
    case "queued": {
      const due = c.deadlineAt ? c.deadlineAt.toISOString().replace("T", " ").slice(0, 16) + " UTC" : "";
      await notify(ctx, shopRecipients(ctx.db, c), {
        kind: "payment_authorized",
        caseId: c.id,
        title: `Paid and queued: ${label}`,
        paragraphs: [
          `Your card was authorised for ${amount} (${p.tierLabel}). The case is now in the queue and the answer is due by ${due}.`,
          "The amount is only held for now: it is charged when an expert delivers the answer, and released if the desk misses the deadline.",
        ],
        link,
        actionLabel: "Open the case",
      });
      await notifyOffers(ctx, c.id, e.offered);
      return;
    }
    case "payment_failed":
      await notify(ctx, p.createdBy ? [p.createdBy] : shopRecipients(ctx.db, c), {
        kind: "payment_failed",
        caseId: c.id,
        title: `Payment did not go through: ${label}`,
        paragraphs: [e.message],
        link,
        mail: false,
      });
      return;
    case "released":
      await notify(ctx, shopRecipients(ctx.db, c), {
        kind: "payment_released",
        caseId: c.id,
        title: `Hold released: ${label}`,
        paragraphs: [
          `The hold of ${amount} on your card has been released; nothing was charged for this case.`,
          ...(e.holdLapsed ? ["The card authorisation ran out before an answer was delivered, so the case was closed as refunded."] : []),
        ],
        link,
      });
      return;
    case "captured":
      await notify(ctx, [...new Set([...shopOwners(ctx.db, c.shopId), ...(c.createdBy ? [c.createdBy] : [])])], {
        kind: "receipt",
        caseId: c.id,
        title: `Receipt: ${label}`,
        paragraphs: [
          `Charged ${amount} for the ${p.tierLabel} second opinion on this case.`,
          `Receipt number ${receiptNumber(p)}. Card ${p.cardBrand ?? "card"} ending ${p.cardLast4 ?? "····"}.`,
        ],
        link: "/billing",
        actionLabel: "See billing",
      });
      return;
    case "refunded":
      await notify(ctx, [...new Set([...shopOwners(ctx.db, c.shopId), ...(c.createdBy ? [c.createdBy] : [])])], {
        kind: "refund",
        caseId: c.id,
        title: `Refund: ${label}`,
        paragraphs: [`${formatCents(e.amountCents, p.currency.toUpperCase())} has been refunded to your card. It can take a few days to show on the statement.`],
        link: "/billing",
      });
      return;
  }
}

// ---------------------------------------------------------------------------------------------
// Views: the case's payment, the shop's billing and receipts

export function receiptNumber(p: Pick<PaymentRow, "id" | "createdAt">): string {
  return `BL-${p.createdAt.toISOString().slice(0, 10).replace(/-/g, "")}-${p.id.slice(0, 8).toUpperCase()}`;
}


export function presentPayment(p: PaymentRow): PaymentView {
  const iso = (d: Date | null) => (d ? d.toISOString() : null);
  return {
    id: p.id,
    status: p.status,
    tier: p.tier,
    tierLabel: p.tierLabel,
    amountCents: p.amountCents,
    currency: p.currency,
    deadlineMinutes: p.deadlineMinutes,
    checkoutUrl: p.status === "pending" || p.status === "failed" ? p.checkoutUrl : null,
    message: p.status === "failed" ? p.failureMessage : null,
    cardBrand: p.cardBrand,
    cardLast4: p.cardLast4,
    authorizedAt: iso(p.authorizedAt),
    capturedAt: iso(p.capturedAt),
    releasedAt: iso(p.releasedAt),
    refundedAt: iso(p.refundedAt),
    receiptNumber: p.status === "captured" || p.status === "refunded" ? receiptNumber(p) : null,
  };
}

export interface BillingView {
  currency: string;
  totals: { chargedCents: number; refundedCents: number; heldCents: number };
  payments: (PaymentView & { caseId: string; caseLabel: string; createdAt: string })[];
}

/** The owner's billing page: every payment attempt that reached Stripe, newest first. */
export function shopBilling(ctx: AppContext, shopId: string): BillingView {
  const rows = ctx.db
    .select({ p: payment, c: schema.caseTable })
    .from(payment)
    .innerJoin(schema.caseTable, eq(schema.caseTable.id, payment.caseId))
    .where(and(eq(payment.shopId, shopId), inArray(payment.status, ["authorized", "captured", "released", "refunded", "failed"])))
    .orderBy(desc(payment.createdAt))
    .all();
  let charged = 0;
  let refunded = 0;
  let held = 0;
  for (const { p } of rows) {
    if (p.status === "captured" || p.status === "refunded") charged += p.amountCents;
    if (p.status === "authorized") held += p.amountCents;
    if (p.status === "refunded") refunded += p.amountCents;
  }
  return {
    currency: rows[0]?.p.currency ?? "usd",
    totals: { chargedCents: charged, refundedCents: refunded, heldCents: held },
    payments: rows.map(({ p, c }) => ({ ...presentPayment(p), caseId: c.id, caseLabel: caseLabel(c), createdAt: p.createdAt.toISOString() })),
  };
}


export function receiptFor(ctx: AppContext, shopId: string | null, paymentId: string): ReceiptView {
  const p = getPayment(ctx.db, paymentId);
  if (!p || (shopId !== null && p.shopId !== shopId)) throw notFound("Receipt");
  if (p.status !== "captured" && p.status !== "refunded") throw notFound("Receipt");
  const c = loadCase(ctx.db, p.caseId)!;
  const s = ctx.db.select().from(shop).where(eq(shop.id, p.shopId)).get()!;
  const refunded = ledgerBalance(ctx.db, p.caseId).refundedCents;
  return {
    receiptNumber: receiptNumber(p),
    shopName: s.name,
    caseId: c.id,
    caseLabel: caseLabel(c),
    tierLabel: p.tierLabel,
    amountCents: p.amountCents,
    refundedCents: refunded,
    currency: p.currency,
    status: p.status,
    cardBrand: p.cardBrand,
    cardLast4: p.cardLast4,
    authorizedAt: p.authorizedAt?.toISOString() ?? null,
    capturedAt: p.capturedAt?.toISOString() ?? null,
    refundedAt: p.refundedAt?.toISOString() ?? null,
  };
}
