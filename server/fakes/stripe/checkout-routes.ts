/** The hosted checkout page: GET /checkout/:sessionId and its card form, POST /checkout/:sessionId/pay. */
import type { IncomingMessage, ServerResponse } from "node:http";
import { renderCheckoutPage, renderNotFound, successUrl } from "./checkout-page";
import { cardFrom, testCtx, type FakeStripeContext } from "./context";
import type { PayResult } from "./engine";
import { readBody, sendHtml } from "./http";

/** Answers the request when it is for the hosted page; false when it is not. */
export async function handleCheckoutPage(
  fake: FakeStripeContext,
  req: IncomingMessage,
  res: ServerResponse,
  path: string,
): Promise<boolean> {
  const { engine, state } = fake;
  const page = /^\/checkout\/([^/]+)$/.exec(path);
  const submit = /^\/checkout\/([^/]+)\/pay$/.exec(path);
  if (page && req.method === "GET") {
    engine.sweep();
    const session = state.checkoutSessions[decodeURIComponent(page[1])];
    if (!session) return (sendHtml(res, 404, renderNotFound()), true);
    sendHtml(res, 200, renderCheckoutPage(session, state.sessionLineItems[session.id] ?? []));
    return true;
  }
  if (submit && req.method === "POST") {
    engine.sweep();
    const session = state.checkoutSessions[decodeURIComponent(submit[1])];
    if (!session) return (sendHtml(res, 404, renderNotFound()), true);
    const form = new URLSearchParams(await readBody(req));
    const number = form.get("card_number") ?? "";
    const expiry = form.get("expiry") ?? "";
    const items = state.sessionLineItems[session.id] ?? [];
    if (session.status === "complete") {
      res.writeHead(303, { location: successUrl(session) }).end();
      return true;
    }
    if (session.status !== "open") {
      sendHtml(res, 410, renderCheckoutPage(session, items));
      return true;
    }
    const input = cardFrom(fake, number, expiry || undefined, form.get("cvc") || undefined, false);
    let result: PayResult;
    if (!number.trim()) {
      result = {
        ok: false,
        session,
        paymentIntent: null,
        error: { type: "card_error", code: "incomplete_number", message: "Your card number is incomplete." },
      };
    } else if (typeof input === "string") {
      result = {
        ok: false,
        session,
        paymentIntent: null,
        error: { type: "card_error", code: "incomplete", message: input },
      };
    } else {
      result = engine.payCheckoutSession(session.id, input, testCtx());
      fake.persist();
    }
    if (result.ok) {
      res.writeHead(303, { location: successUrl(result.session) }).end();
    } else {
      sendHtml(
        res,
        result.validationError || !result.paymentIntent ? 400 : 402,
        renderCheckoutPage(result.session, items, { error: result.error?.message, cardNumber: number, expiry }),
      );
    }
    return true;
  }
  return false;
}
