/** Test-only endpoints under /_test/ (no Stripe equivalent; never used by the app's production code). */
import type { IncomingMessage, ServerResponse } from "node:http";
import { advanceClock, paySession, type FakeStripeContext } from "./context";
import { FakeStripeError, invalidRequest } from "./errors";
import { readBody, send } from "./http";

async function jsonBody(req: IncomingMessage): Promise<Record<string, unknown>> {
  const raw = await readBody(req);
  if (!raw) return {};
  try {
    const v = JSON.parse(raw) as unknown;
    return v && typeof v === "object" ? (v as Record<string, unknown>) : {};
  } catch {
    throw invalidRequest("Body must be JSON.");
  }
}

/** Answers the request when it is under /_test/; false when it is not. */
export async function handleTest(
  fake: FakeStripeContext,
  req: IncomingMessage,
  res: ServerResponse,
  path: string,
): Promise<boolean> {
  if (!path.startsWith("/_test/")) return false;
  try {
    const payMatch = /^\/_test\/checkout\/([^/]+)\/pay$/.exec(path);
    if (payMatch && req.method === "POST") {
      const body = await jsonBody(req);
      if (typeof body.card !== "string") throw invalidRequest("card (string) is required", "parameter_missing", "card");
      const result = paySession(fake, decodeURIComponent(payMatch[1]), body.card, {
        exp: typeof body.exp === "string" ? body.exp : undefined,
        cvc: typeof body.cvc === "string" ? body.cvc : undefined,
      });
      const payload = {
        ok: result.ok,
        session: result.session,
        payment_intent: result.paymentIntent,
        ...(result.error ? { error: result.error } : {}),
      };
      send(res, result.ok ? 200 : result.validationError ? 400 : 402, JSON.stringify(payload, null, 2));
      return true;
    }
    if (path === "/_test/clock/advance" && req.method === "POST") {
      const body = await jsonBody(req);
      const seconds = Number(body.seconds);
      if (!Number.isFinite(seconds) || seconds < 0) {
        throw invalidRequest("seconds must be a non-negative number", undefined, "seconds");
      }
      advanceClock(fake, seconds);
      send(res, 200, JSON.stringify({ now: fake.now() }));
      return true;
    }
    if (path === "/_test/events" && req.method === "GET") {
      send(res, 200, JSON.stringify({ data: fake.state.events }, null, 2));
      return true;
    }
    throw invalidRequest(`Unknown test endpoint (${req.method}: ${path}).`, undefined, undefined, 404);
  } catch (err) {
    if (err instanceof FakeStripeError) {
      send(res, err.status, JSON.stringify({ error: err.body }, null, 2));
      return true;
    }
    throw err;
  }
}
