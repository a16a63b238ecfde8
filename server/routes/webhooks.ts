import { Router } from "express";
import type { AppContext } from "../context";
import { verifyWebhook, WebhookVerificationError } from "../integrations/payments";
import { handlePaymentEvent } from "../workflow/commands/payment-events";

/**
 * POST /api/webhooks/stripe. The app mounts express.raw for /api/webhooks and exempts it from the
 * cross-site guard. The raw body is verified (300 s tolerance, future timestamps refused) before
 * anything is read; a verified event is applied exactly once. 400 for a bad signature; an event
 * about nothing of ours is acknowledged (`ignored`); 500 only when the payment service could not be
 * reached while applying one of ours (Stripe then retries).
 */
export function webhookRoutes(ctx: AppContext): Router {
  const r = Router();
  r.post("/webhooks/stripe", async (req, res) => {
    const raw: Buffer | string = Buffer.isBuffer(req.body) ? req.body : typeof req.body === "string" ? req.body : "";
    let event;
    try {
      event = verifyWebhook(raw, req.headers["stripe-signature"], ctx.env.STRIPE_WEBHOOK_SECRET);
    } catch (err) {
      if (err instanceof WebhookVerificationError) {
        res.status(400).json({ error: { code: err.code, message: err.message } });
        return;
      }
      throw err;
    }
    const outcome = await handlePaymentEvent(ctx, event);
    res.json({ received: true, id: event.id, outcome });
  });
  return r;
}
