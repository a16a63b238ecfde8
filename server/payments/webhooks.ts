/**
 * Verified Stripe events, applied exactly once: the event id is stored in the same unit that
 * applies it, so the same event delivered twice at the same moment applies once. Handlers do not
 * trust the event's copy of the object: they re-fetch the PaymentIntent and move our payment
 * forward only, so events arriving in any order give the same result.
 *
 * An event about nothing of ours (another integration's payment on the same account, an object
 * that is gone) is acknowledged, stored as `ignored` and logged; it is never answered 500, which
 * would make the payment service retry it for days. Only a failure to reach the payment service
 * while applying one of ours throws (→ 500, retried).
 */
import { eq } from "drizzle-orm";
import type Stripe from "stripe";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import { reconcileInTx, type PaymentReactor } from "./reconcile";
import { fetchIntent, isMissingObject } from "./stripe-calls";
import { findPayment, movePayment, rank, type PaymentRow } from "./store";

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
const CHARGE_EVENTS = new Set([
  "charge.succeeded",
  "charge.failed",
  "charge.captured",
  "charge.expired",
  "charge.refunded",
  "charge.updated",
]);
const SESSION_EVENTS = new Set([
  "checkout.session.completed",
  "checkout.session.expired",
  "checkout.session.async_payment_succeeded",
  "checkout.session.async_payment_failed",
]);

interface EventObject {
  id: string;
  object: string;
  payment_intent?: string | { id: string } | null;
  metadata?: Record<string, string> | null;
}

/** The references an event's object gives to a payment of ours. */
function referencesOf(event: Stripe.Event): {
  sessionId: string | null;
  intentId: string | null;
  paymentId: string | null;
} {
  const obj = event.data.object as unknown as EventObject;
  const linked = typeof obj.payment_intent === "string" ? obj.payment_intent : (obj.payment_intent?.id ?? null);
  return {
    sessionId: SESSION_EVENTS.has(event.type) ? obj.id : null,
    intentId: INTENT_EVENTS.has(event.type) ? obj.id : linked,
    paymentId: obj.metadata?.paymentId ?? null,
  };
}

const isOurs = (event: Stripe.Event) =>
  INTENT_EVENTS.has(event.type) || CHARGE_EVENTS.has(event.type) || SESSION_EVENTS.has(event.type);

async function storeEvent(tx: Tx, event: Stripe.Event, outcome: EventOutcome, now: Date): Promise<boolean> {
  const obj = event.data.object as unknown as EventObject;
  const inserted = await tx
    .insert(schema.stripeEvent)
    .values({ id: event.id, type: event.type, objectId: obj.id ?? null, outcome, receivedAt: now })
    .onConflictDoNothing()
    .returning({ id: schema.stripeEvent.id })
    .all();
  return inserted.length === 1;
}

async function ignore(ctx: AppContext, event: Stripe.Event, why: string): Promise<EventOutcome> {
  const stored = await ctx.db.write(async (tx) => storeEvent(tx, event, "ignored", ctx.now()));
  if (stored)
    ctx.logger.info({ eventId: event.id, type: event.type, why }, "payment event ignored: it concerns nothing of ours");
  return stored ? "ignored" : "duplicate";
}

/** The fresh PaymentIntent an event is about (null when the event's object has none, or it is gone). */
async function freshIntent(
  ctx: AppContext,
  event: Stripe.Event,
  refs: ReturnType<typeof referencesOf>,
  p: PaymentRow,
): Promise<Stripe.PaymentIntent | null> {
  let intentId = refs.intentId ?? p.paymentIntentId;
  if (refs.sessionId) {
    const s = await ctx.stripe.checkout.sessions.retrieve(refs.sessionId);
    intentId = typeof s.payment_intent === "string" ? s.payment_intent : (s.payment_intent?.id ?? intentId);
  }
  return intentId ? fetchIntent(ctx, intentId) : null;
}

/** Apply one verified Stripe event exactly once. Throws (→ 500, retried) when Stripe cannot be reached. */
export async function applyStripeEvent(
  ctx: AppContext,
  event: Stripe.Event,
  react: PaymentReactor,
): Promise<EventOutcome> {
  const seen = await ctx.db.read(async (tx) =>
    tx.select({ id: schema.stripeEvent.id }).from(schema.stripeEvent).where(eq(schema.stripeEvent.id, event.id)).get(),
  );
  if (seen) return "duplicate";
  if (!isOurs(event)) return ignore(ctx, event, "not a payment event");
  const refs = referencesOf(event);
  const p = await ctx.db.read(async (tx) =>
    findPayment(tx, { paymentIntentId: refs.intentId, sessionId: refs.sessionId, paymentId: refs.paymentId }),
  );
  if (!p) return ignore(ctx, event, "no payment of ours has these references");

  let pi: Stripe.PaymentIntent | null;
  try {
    pi = await freshIntent(ctx, event, refs, p);
  } catch (err) {
    if (isMissingObject(err)) return ignore(ctx, event, "the payment service no longer has the object");
    throw err;
  }
  const outcome = await ctx.db.write(async (tx): Promise<EventOutcome> => {
    const now = ctx.now();
    if (!(await storeEvent(tx, event, "applied", now))) return "duplicate";
    const current = (await findPayment(tx, { paymentId: p.id }))!;
    if (pi) {
      const facts = await reconcileInTx(tx, current, pi, now, ctx.logger);
      if (facts.length) await react(tx, facts, now);
    } else if (event.type === "checkout.session.expired" && rank(current.status) < 2) {
      if (await movePayment(tx, current.id, ["creating", "pending", "failed"], { status: "expired", updatedAt: now })) {
        await react(tx, [{ kind: "expired", payment: current }], now);
      }
    }
    return "applied";
  });
  return outcome;
}
