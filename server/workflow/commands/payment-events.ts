/**
 * pay / paymentFails / holdEnds, as the payment service reports them: a verified webhook event, or
 * a sync the shop's page asks for on its return from checkout. The payments apply the event; the
 * workflow's reaction (../payment-reactions.ts) moves the case in the same unit; the effects run
 * after the commit.
 */
import type Stripe from "stripe";
import type { AppContext } from "../../context";
import { applyStripeEvent, type EventOutcome } from "../../payments/webhooks";
import { syncPayment } from "../../payments/stripe-calls";
import type { PaymentRow } from "../../payments/store";
import type { Effect } from "../effect";
import { runEffects } from "../effects";
import { paymentReactor } from "../payment-reactions";

/** POST /api/webhooks/stripe, once verified. */
export async function handlePaymentEvent(ctx: AppContext, event: Stripe.Event): Promise<EventOutcome> {
  const fx: Effect[] = [];
  const outcome = await applyStripeEvent(ctx, event, paymentReactor(fx));
  await runEffects(ctx, fx);
  return outcome;
}

/** Reads one payment from the payment service now and applies what changed (e.g. a return from checkout). */
export async function refreshPayment(ctx: AppContext, paymentId: string): Promise<PaymentRow | undefined> {
  const fx: Effect[] = [];
  const p = await syncPayment(ctx, paymentId, paymentReactor(fx));
  await runEffects(ctx, fx);
  return p;
}
