/** The /v1 API: authentication, routing, idempotent replays and the JSON answers. */
import { timingSafeEqual } from "node:crypto";
import type { IncomingMessage, ServerResponse } from "node:http";
import type { FakeStripeContext } from "./context";
import { DEFAULT_API_VERSION, randomId, type FakeStripeEngine, type RequestContext } from "./engine";
import { FakeStripeError, invalidRequest } from "./errors";
import { canonicalParams, decodeForm, FormDecodeError, type FormObject } from "./form";
import { errorJson, readBody, send } from "./http";

type Handler = (e: FakeStripeEngine, ctx: RequestContext, params: FormObject, m: RegExpExecArray) => unknown;

const routes: Array<[string, RegExp, Handler]> = [
  ["POST", /^\/v1\/customers$/, (e, c, p) => e.createCustomer(p, c)],
  ["GET", /^\/v1\/customers\/([^/]+)$/, (e, _c, p, m) => e.expand(e.retrieveCustomer(m[1]), p)],
  ["POST", /^\/v1\/customers\/([^/]+)$/, (e, c, p, m) => e.updateCustomer(m[1], p, c)],
  ["POST", /^\/v1\/checkout\/sessions$/, (e, c, p) => e.createCheckoutSession(p, c)],
  ["GET", /^\/v1\/checkout\/sessions\/([^/]+)$/, (e, _c, p, m) => e.expand(e.retrieveCheckoutSession(m[1]), p)],
  ["GET", /^\/v1\/checkout\/sessions\/([^/]+)\/line_items$/, (e, _c, p, m) => e.listLineItems(m[1], p)],
  ["POST", /^\/v1\/checkout\/sessions\/([^/]+)\/expire$/, (e, c, p, m) => e.expireCheckoutSession(m[1], p, c)],
  ["POST", /^\/v1\/payment_intents$/, (e, c, p) => e.createPaymentIntent(p, c)],
  ["GET", /^\/v1\/payment_intents\/([^/]+)$/, (e, _c, p, m) => e.expand(e.retrievePaymentIntent(m[1]), p)],
  ["POST", /^\/v1\/payment_intents\/([^/]+)$/, (e, c, p, m) => e.updatePaymentIntent(m[1], p, c)],
  ["POST", /^\/v1\/payment_intents\/([^/]+)\/confirm$/, (e, c, p, m) => e.confirmPaymentIntent(m[1], p, c)],
  ["POST", /^\/v1\/payment_intents\/([^/]+)\/capture$/, (e, c, p, m) => e.capturePaymentIntent(m[1], p, c)],
  ["POST", /^\/v1\/payment_intents\/([^/]+)\/cancel$/, (e, c, p, m) => e.cancelPaymentIntent(m[1], p, c)],
  ["GET", /^\/v1\/charges\/([^/]+)$/, (e, _c, p, m) => e.expand(e.retrieveCharge(m[1]), p)],
  ["GET", /^\/v1\/payment_methods\/([^/]+)$/, (e, _c, p, m) => e.expand(e.retrievePaymentMethod(m[1]), p)],
  ["POST", /^\/v1\/refunds$/, (e, c, p) => e.createRefund(p, c)],
  ["GET", /^\/v1\/refunds\/([^/]+)$/, (e, _c, p, m) => e.expand(e.retrieveRefund(m[1]), p)],
  ["POST", /^\/v1\/accounts$/, (e, c, p) => e.createAccount(p, c)],
  ["GET", /^\/v1\/accounts\/([^/]+)$/, (e, _c, p, m) => e.expand(e.retrieveAccount(m[1]), p)],
  ["POST", /^\/v1\/transfers$/, (e, c, p) => e.createTransfer(p, c)],
  ["GET", /^\/v1\/transfers\/([^/]+)$/, (e, _c, p, m) => e.expand(e.retrieveTransfer(m[1]), p)],
  ["GET", /^\/v1\/balance$/, (e) => e.balance()],
  ["GET", /^\/v1\/events$/, (e, _c, p) => e.listEvents(p)],
  ["GET", /^\/v1\/events\/([^/]+)$/, (e, _c, _p, m) => e.retrieveEvent(m[1])],
];

/** Compares an API key with the configured one in constant time (the lengths are compared first). */
export function sameKey(given: string, expected: string): boolean {
  const a = Buffer.from(given, "utf8");
  const b = Buffer.from(expected, "utf8");
  return a.length === b.length && timingSafeEqual(a, b);
}

function authenticate(req: IncomingMessage, secretKey: string | undefined): string {
  const header = req.headers.authorization ?? "";
  let key = "";
  if (/^Bearer /i.test(header)) key = header.slice(7).trim();
  else if (/^Basic /i.test(header)) key = Buffer.from(header.slice(6), "base64").toString("utf8").split(":")[0];
  if (!key) {
    throw new FakeStripeError(401, {
      type: "invalid_request_error",
      message:
        "You did not provide an API key. You need to provide your API key in the Authorization header, using Bearer auth (e.g. 'Authorization: Bearer YOUR_SECRET_KEY').",
    });
  }
  const masked = `${key.slice(0, 8)}${"*".repeat(Math.max(0, key.length - 12))}${key.slice(-4)}`;
  const acceptable = secretKey ? sameKey(key, secretKey) : /^(sk|rk)_test_\S+$/.test(key);
  if (!acceptable) {
    throw new FakeStripeError(401, {
      type: "invalid_request_error",
      code: "api_key_invalid",
      message: `Invalid API Key provided: ${masked}${/_live_/.test(key) ? " (the local fake accepts test keys only)" : ""}`,
    });
  }
  return key;
}

export async function handleApi(
  fake: FakeStripeContext,
  req: IncomingMessage,
  res: ServerResponse,
  path: string,
  query: string,
): Promise<void> {
  const { engine, state, log } = fake;
  const requestId = randomId("req_", 14);
  const apiVersion = (req.headers["stripe-version"] as string | undefined) ?? DEFAULT_API_VERSION;
  const method = (req.method ?? "GET").toUpperCase();
  const baseHeaders: Record<string, string> = { "request-id": requestId, "stripe-version": apiVersion };
  const idemKey = method === "POST" ? ((req.headers["idempotency-key"] as string | undefined) ?? null) : null;
  if (idemKey) baseHeaders["idempotency-key"] = idemKey;
  try {
    const apiKey = authenticate(req, fake.secretKey);
    const raw = method === "POST" ? await readBody(req) : query;
    let params: FormObject;
    try {
      params = decodeForm(raw);
    } catch (e) {
      if (e instanceof FormDecodeError) throw invalidRequest(e.message, "parameter_invalid_string", e.param);
      throw e;
    }
    const route = routes.find(([m, re]) => m === method && re.test(path));
    if (!route) {
      const anyMethod = routes.some(([, re]) => re.test(path));
      throw invalidRequest(
        anyMethod
          ? `Unrecognized request URL (${method}: ${path}).`
          : `Unrecognized request URL (${method}: ${path}). The local fake implements only the endpoints the app uses.`,
        undefined,
        undefined,
        404,
      );
    }
    // Idempotency (docs.stripe.com/api/idempotent_requests): the same key with the same request
    // replays the stored answer; with a different request it is an idempotency_error.
    const signatureOfRequest = canonicalParams(params);
    const storeKey = idemKey ? `${apiKey}\u0000${idemKey}` : null;
    if (storeKey) {
      const prior = state.idempotency[storeKey];
      if (prior) {
        if (prior.method !== method || prior.path !== path || prior.params !== signatureOfRequest) {
          throw new FakeStripeError(400, {
            type: "idempotency_error",
            message: `Keys for idempotent requests can only be used with the same parameters they were first used with. Try using a key other than '${idemKey}' if you meant to execute a different request.`,
          });
        }
        log?.(`${method} ${path} replayed (${idemKey})`);
        send(res, prior.status, prior.body, {
          ...baseHeaders,
          "idempotent-replayed": "true",
          "original-request": prior.path,
        });
        return;
      }
    }
    engine.sweep();
    const m = route[1].exec(path)!;
    const ctx: RequestContext = { requestId, idempotencyKey: idemKey, apiVersion };
    let status = 200;
    let body: string;
    let storable = true;
    try {
      const result = route[2](engine, ctx, params, m);
      const expanded = method === "POST" && params.expand !== undefined ? engine.expand(result, params) : result;
      body = JSON.stringify(expanded, null, 2);
    } catch (err) {
      if (!(err instanceof FakeStripeError)) throw err;
      status = err.status;
      body = errorJson(err, requestId);
      // Stripe saves the result once the endpoint has started executing (402 card errors are
      // replayed); requests refused at validation are not saved.
      storable = err.status === 402;
    }
    if (storeKey && storable) {
      state.idempotency[storeKey] = {
        apiKey,
        key: idemKey!,
        method,
        path,
        params: signatureOfRequest,
        status,
        body,
        storedAt: Date.now(),
      };
    }
    if (method === "POST") fake.persist();
    log?.(`${method} ${path} → ${status}`);
    send(res, status, body, baseHeaders);
  } catch (err) {
    if (err instanceof FakeStripeError) {
      log?.(`${method} ${path} → ${err.status} ${err.body.code ?? err.body.type}`);
      send(res, err.status, errorJson(err, requestId), baseHeaders);
      return;
    }
    const message = err instanceof Error ? err.message : String(err);
    log?.(`${method} ${path} → 500 ${message}`);
    send(
      res,
      500,
      JSON.stringify({ error: { type: "api_error", message: `Fake Stripe internal error: ${message}` } }),
      {
        ...baseHeaders,
        "stripe-should-retry": "false",
      },
    );
  }
}
