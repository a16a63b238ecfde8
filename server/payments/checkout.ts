/**
 * Opening the checkout of a payment attempt: the shop's customer (once), then a Checkout Session
 * whose PaymentIntent uses manual capture; the session's address is stored with the attempt. The
 * attempt row itself is written by the workflow's submit command (in its unit) beforehand.
 */
import type { AppContext } from "../context";
import { HttpError } from "../http/errors";
import { createCheckoutSession, ensureShopCustomer } from "./stripe-calls";
import { movePayment, type PaymentRow } from "./store";

export async function openCheckout(
  ctx: AppContext,
  p: PaymentRow,
  productName: string,
): Promise<{ checkoutUrl: string }> {
  try {
    const customer = await ensureShopCustomer(ctx, p.shopId);
    const session = await createCheckoutSession(ctx, {
      payment: p,
      customer,
      productName,
      casePath: `/cases/${encodeURIComponent(p.caseId)}`,
    });
    const stored = await ctx.db.write(async (tx) =>
      movePayment(tx, p.id, ["creating"], {
        status: "pending",
        checkoutSessionId: session.id,
        checkoutUrl: session.url,
        updatedAt: ctx.now(),
      }),
    );
    if (!stored) {
      // replaced by a later attempt while the session was being made: it must not be paid
      await ctx.stripe.checkout.sessions
        .expire(session.id, {}, { idempotencyKey: `expire:${session.id}` })
        .catch(() => undefined);
      throw new HttpError(
        409,
        "checkout_replaced",
        "A newer checkout of this case replaced this one; open the case to pay.",
      );
    }
    return { checkoutUrl: session.url! };
  } catch (err) {
    if (err instanceof HttpError) throw err;
    ctx.logger.error({ err, caseId: p.caseId }, "checkout session could not be created");
    const message = "The payment service did not answer. Nothing was charged; try again in a moment.";
    await ctx.db.write(async (tx) =>
      movePayment(tx, p.id, ["creating"], {
        status: "failed",
        failureCode: "checkout_unavailable",
        failureMessage: message,
        updatedAt: ctx.now(),
      }),
    );
    throw new HttpError(502, "payment_unavailable", message);
  }
}
