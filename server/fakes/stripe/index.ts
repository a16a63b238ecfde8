/**
 * A local, in-process stand-in for the Stripe API, for development, the demo and tests.
 *
 * Point the official SDK at it with `new Stripe(key, { host, port, protocol: "http" })` (see
 * server/integrations/payments.ts, createStripeClient with apiBase = fake.url). It speaks the v1 wire
 * protocol the SDK uses (node_modules/stripe/esm/RequestSender.js and utils.js): form-encoded bodies
 * in bracket notation, `Authorization: Bearer sk_test_…`, `Idempotency-Key` (the SDK sends one on
 * every POST), `Stripe-Version`; JSON answers; errors as `{ error: { type, code, message, param } }`.
 *
 * Endpoints (all under /v1, test keys only):
 *   POST /customers · GET|POST /customers/:id
 *   POST /checkout/sessions · GET /checkout/sessions/:id · GET /checkout/sessions/:id/line_items
 *   POST /checkout/sessions/:id/expire
 *   POST /payment_intents · GET|POST /payment_intents/:id · POST /payment_intents/:id/{confirm,capture,cancel}
 *   GET /charges/:id · GET /payment_methods/:id
 *   POST /refunds · GET /refunds/:id
 *   POST /accounts · GET /accounts/:id · POST /transfers · GET /transfers/:id · GET /balance
 *   GET /events · GET /events/:id
 * Hosted page: GET /checkout/:sessionId, POST /checkout/:sessionId/pay (form: card_number, expiry, cvc).
 * Test-only (no Stripe equivalent; never used by the app's production code):
 *   POST /_test/checkout/:sessionId/pay  JSON { card, exp?: "MM/YY", cvc? } → 200 { ok, session, payment_intent } or 402 { error, … }
 *   POST /_test/clock/advance            JSON { seconds } → { now }
 *   GET  /_test/events                   → { data: events (oldest first) }
 */
import { randomBytes, timingSafeEqual } from "node:crypto";
import { existsSync, mkdirSync, readFileSync, renameSync, writeFileSync } from "node:fs";
import { createServer, type IncomingMessage, type ServerResponse } from "node:http";
import type { AddressInfo } from "node:net";
import { dirname } from "node:path";
import { parseExpiry, type CardInput } from "./cards";
import { renderCheckoutPage, renderNotFound, successUrl } from "./checkout-page";
import { DEFAULT_API_VERSION, FakeStripeEngine, randomId, type PayResult, type RequestContext } from "./engine";
import { FakeStripeError, invalidRequest } from "./errors";
import { canonicalParams, decodeForm, FormDecodeError, type FormObject } from "./form";
import { emptyState, type EventObject, type FakeStripeState } from "./types";
import { signPayload, WebhookDispatcher, type DeliveryAttempt, type RetryPolicy } from "./webhooks";

export type { DeliveryAttempt, RetryPolicy } from "./webhooks";
export { signPayload, eventPayload } from "./webhooks";
export type { FakeStripeState, EventObject } from "./types";
export type { PayResult } from "./engine";
export { AUTHORIZATION_VALIDITY_SECONDS, DEFAULT_API_VERSION } from "./engine";

export interface FakeStripeOptions {
  /** 0 (default) picks a free port. */
  port?: number;
  /** Default 127.0.0.1. */
  host?: string;
  /** Where events are POSTed; may be set later with setWebhookUrl(). Events created while unset are not delivered. */
  webhookUrl?: string;
  /** The signing secret shared with the app (e.g. "whsec_…"). */
  webhookSecret: string;
  /** Base of the URLs handed to browsers (session.url). Default http://<publicHost or host>:<port>. */
  publicBaseUrl?: string;
  /** Host name for the URLs handed to browsers when publicBaseUrl is not given (e.g. the app's own, "localhost"). */
  publicHost?: string;
  /** Webhook retry schedule. Default { baseMs: 1000, maxAttempts: 8, maxDelayMs: 60000 }. */
  retry?: RetryPolicy;
  /** Per-attempt webhook timeout. Default 10 s. */
  webhookTimeoutMs?: number;
  /** JSON file to load state from and save it to after each change (so `npm start` survives a restart). */
  stateFile?: string;
  /** When set, only this secret key is accepted; otherwise any sk_test_/rk_test_ key is. */
  secretKey?: string;
  /** Overrides the fake's clock (unix seconds). advanceClock() adds to it. */
  now?: () => number;
  /** Optional request/delivery log sink (nothing is printed by default). */
  log?: (line: string) => void;
}

export interface FakeStripe {
  /** API base for the SDK, e.g. http://127.0.0.1:40123 */
  readonly url: string;
  readonly host: string;
  readonly port: number;
  readonly webhookSecret: string;
  close(): Promise<void>;
  setWebhookUrl(url: string | undefined): void;
  /** Every webhook attempt so far (live array). */
  readonly deliveries: DeliveryAttempt[];
  /** Resolves once no webhook delivery is in flight or scheduled for retry. */
  idle(): Promise<void>;
  /** The live state (read it; do not write it). */
  readonly state: FakeStripeState;
  /** The fake's current time, unix seconds. */
  now(): number;
  /** Move the fake's clock forward (lapses holds past capture_before, expires sessions). */
  advanceClock(seconds: number): void;
  /** Events so far, oldest first, optionally of one type. */
  events(type?: string): EventObject[];
  /** Pay a Checkout Session in-process, as the hosted page would. */
  pay(sessionId: string, card: string, opts?: { exp?: string; cvc?: string }): PayResult;
  /** Hold new webhook deliveries until releaseDeliveries() (to test out-of-order arrival). */
  holdDeliveries(): void;
  releaseDeliveries(opts?: { reverse?: boolean }): void;
  /** Deliver one stored event again (once, no retries), optionally with a forged signature/timestamp/body. */
  redeliver(
    eventId: string,
    opts?: { url?: string; signature?: string; timestamp?: number; payload?: string },
  ): Promise<DeliveryAttempt>;
  /** The Stripe-Signature header value for a payload, signed with this fake's secret. */
  sign(payload: string, timestampSeconds?: number): string;
}

const MAX_BODY_BYTES = 1024 * 1024;

function readBody(req: IncomingMessage): Promise<string> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    let size = 0;
    req.on("data", (c: Buffer) => {
      size += c.length;
      if (size > MAX_BODY_BYTES) {
        reject(new FakeStripeError(413, { type: "invalid_request_error", message: "Request body too large." }));
        req.destroy();
        return;
      }
      chunks.push(c);
    });
    req.on("end", () => resolve(Buffer.concat(chunks).toString("utf8")));
    req.on("error", reject);
  });
}

function loadState(file: string | undefined): FakeStripeState {
  if (!file || !existsSync(file)) return emptyState();
  try {
    const parsed = JSON.parse(readFileSync(file, "utf8")) as FakeStripeState & { paymentMethodNumbers?: unknown };
    if (parsed.version !== 1) return emptyState();
    // Files written by earlier versions held full card numbers; they are not read back (and the
    // next save leaves them out).
    delete parsed.paymentMethodNumbers;
    return { ...emptyState(), ...parsed };
  } catch {
    return emptyState();
  }
}

function saveState(file: string, state: FakeStripeState): void {
  mkdirSync(dirname(file), { recursive: true });
  const tmp = `${file}.${process.pid}.tmp`;
  writeFileSync(tmp, JSON.stringify(state));
  renameSync(tmp, file);
}

type Handler = (ctx: RequestContext, params: FormObject, m: RegExpExecArray) => unknown;

/** Compares an API key with the configured one in constant time (the lengths are compared first). */
export function sameKey(given: string, expected: string): boolean {
  const a = Buffer.from(given, "utf8");
  const b = Buffer.from(expected, "utf8");
  return a.length === b.length && timingSafeEqual(a, b);
}

export async function startFakeStripe(options: FakeStripeOptions): Promise<FakeStripe> {
  if (!options.webhookSecret) throw new Error("startFakeStripe: webhookSecret is required");
  const host = options.host ?? "127.0.0.1";
  const log = options.log;
  let webhookUrl = options.webhookUrl;
  let publicBase = "";
  const state = loadState(options.stateFile);
  const baseNow = options.now ?? (() => Math.floor(Date.now() / 1000));
  const now = () => baseNow() + state.clockOffsetSeconds;

  const dispatcher = new WebhookDispatcher({
    secret: options.webhookSecret,
    retry: options.retry ?? { baseMs: 1000, maxAttempts: 8, maxDelayMs: 60_000 },
    timeoutMs: options.webhookTimeoutMs ?? 10_000,
    log,
  });

  const engine = new FakeStripeEngine({
    now,
    state,
    publicBaseUrl: () => publicBase,
    onEvent: (event) => {
      if (webhookUrl) {
        event.pending_webhooks = 1;
        dispatcher.enqueue(event, webhookUrl);
      }
    },
  });

  const persist = () => {
    if (options.stateFile) saveState(options.stateFile, state);
  };

  const routes: Array<[string, RegExp, Handler]> = [
    ["POST", /^\/v1\/customers$/, (c, p) => engine.createCustomer(p, c)],
    ["GET", /^\/v1\/customers\/([^/]+)$/, (_c, p, m) => engine.expand(engine.retrieveCustomer(m[1]), p)],
    ["POST", /^\/v1\/customers\/([^/]+)$/, (c, p, m) => engine.updateCustomer(m[1], p, c)],
    ["POST", /^\/v1\/checkout\/sessions$/, (c, p) => engine.createCheckoutSession(p, c)],
    ["GET", /^\/v1\/checkout\/sessions\/([^/]+)$/, (_c, p, m) => engine.expand(engine.retrieveCheckoutSession(m[1]), p)],
    ["GET", /^\/v1\/checkout\/sessions\/([^/]+)\/line_items$/, (_c, p, m) => engine.listLineItems(m[1], p)],
    ["POST", /^\/v1\/checkout\/sessions\/([^/]+)\/expire$/, (c, p, m) => engine.expireCheckoutSession(m[1], p, c)],
    ["POST", /^\/v1\/payment_intents$/, (c, p) => engine.createPaymentIntent(p, c)],
    ["GET", /^\/v1\/payment_intents\/([^/]+)$/, (_c, p, m) => engine.expand(engine.retrievePaymentIntent(m[1]), p)],
    ["POST", /^\/v1\/payment_intents\/([^/]+)$/, (c, p, m) => engine.updatePaymentIntent(m[1], p, c)],
    ["POST", /^\/v1\/payment_intents\/([^/]+)\/confirm$/, (c, p, m) => engine.confirmPaymentIntent(m[1], p, c)],
    ["POST", /^\/v1\/payment_intents\/([^/]+)\/capture$/, (c, p, m) => engine.capturePaymentIntent(m[1], p, c)],
    ["POST", /^\/v1\/payment_intents\/([^/]+)\/cancel$/, (c, p, m) => engine.cancelPaymentIntent(m[1], p, c)],
    ["GET", /^\/v1\/charges\/([^/]+)$/, (_c, p, m) => engine.expand(engine.retrieveCharge(m[1]), p)],
    ["GET", /^\/v1\/payment_methods\/([^/]+)$/, (_c, p, m) => engine.expand(engine.retrievePaymentMethod(m[1]), p)],
    ["POST", /^\/v1\/refunds$/, (c, p) => engine.createRefund(p, c)],
    ["GET", /^\/v1\/refunds\/([^/]+)$/, (_c, p, m) => engine.expand(engine.retrieveRefund(m[1]), p)],
    ["POST", /^\/v1\/accounts$/, (c, p) => engine.createAccount(p, c)],
    ["GET", /^\/v1\/accounts\/([^/]+)$/, (_c, p, m) => engine.expand(engine.retrieveAccount(m[1]), p)],
    ["POST", /^\/v1\/transfers$/, (c, p) => engine.createTransfer(p, c)],
    ["GET", /^\/v1\/transfers\/([^/]+)$/, (_c, p, m) => engine.expand(engine.retrieveTransfer(m[1]), p)],
    ["GET", /^\/v1\/balance$/, () => engine.balance()],
    ["GET", /^\/v1\/events$/, (_c, p) => engine.listEvents(p)],
    ["GET", /^\/v1\/events\/([^/]+)$/, (_c, _p, m) => engine.retrieveEvent(m[1])],
  ];

  const send = (res: ServerResponse, status: number, body: string, headers: Record<string, string> = {}) => {
    res.writeHead(status, { "content-type": "application/json", "content-length": Buffer.byteLength(body), ...headers });
    res.end(body);
  };
  const sendHtml = (res: ServerResponse, status: number, html: string) => {
    res.writeHead(status, {
      "content-type": "text/html; charset=utf-8",
      "cache-control": "no-store",
      "content-security-policy": "default-src 'none'; style-src 'unsafe-inline'; base-uri 'none'; frame-ancestors 'none'",
      "x-content-type-options": "nosniff",
      "referrer-policy": "no-referrer",
    });
    res.end(html);
  };
  const errorJson = (err: FakeStripeError, requestId: string) =>
    JSON.stringify({ error: { ...err.body, request_log_url: `https://dashboard.stripe.com/test/logs/${requestId}` } }, null, 2);

  function authenticate(req: IncomingMessage): string {
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
    const acceptable = options.secretKey ? sameKey(key, options.secretKey) : /^(sk|rk)_test_\S+$/.test(key);
    if (!acceptable) {
      throw new FakeStripeError(401, {
        type: "invalid_request_error",
        code: "api_key_invalid",
        message: `Invalid API Key provided: ${masked}${/_live_/.test(key) ? " (the local fake accepts test keys only)" : ""}`,
      });
    }
    return key;
  }

  async function handleApi(req: IncomingMessage, res: ServerResponse, path: string, query: string): Promise<void> {
    const requestId = randomId("req_", 14);
    const apiVersion = (req.headers["stripe-version"] as string | undefined) ?? DEFAULT_API_VERSION;
    const method = (req.method ?? "GET").toUpperCase();
    const baseHeaders: Record<string, string> = { "request-id": requestId, "stripe-version": apiVersion };
    const idemKey = method === "POST" ? ((req.headers["idempotency-key"] as string | undefined) ?? null) : null;
    if (idemKey) baseHeaders["idempotency-key"] = idemKey;
    try {
      const apiKey = authenticate(req);
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
          send(res, prior.status, prior.body, { ...baseHeaders, "idempotent-replayed": "true", "original-request": prior.path });
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
        const result = route[2](ctx, params, m);
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
      if (method === "POST") persist();
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
      send(res, 500, JSON.stringify({ error: { type: "api_error", message: `Fake Stripe internal error: ${message}` } }), {
        ...baseHeaders,
        "stripe-should-retry": "false",
      });
    }
  }

  function cardFrom(number: string, exp: string | undefined, cvc: string | undefined, defaults: boolean): CardInput | string {
    const year = new Date(now() * 1000).getUTCFullYear();
    const expiry = exp ? parseExpiry(exp) : defaults ? { month: 12, year: year + 3 } : null;
    if (!expiry) return "Your card's expiration date is incomplete.";
    const digits = number.replace(/[\s-]/g, "");
    const cvcValue = cvc ?? (defaults ? (/^3[47]/.test(digits) ? "1234" : "123") : "");
    if (!cvcValue) return "Your card's security code is incomplete.";
    return { number, expMonth: expiry.month, expYear: expiry.year, cvc: cvcValue };
  }

  function testCtx(): RequestContext {
    return { requestId: null, idempotencyKey: null, apiVersion: DEFAULT_API_VERSION };
  }

  function pay(sessionId: string, card: string, opts: { exp?: string; cvc?: string } = {}): PayResult {
    engine.sweep();
    const session = engine.retrieveCheckoutSession(sessionId);
    const input = cardFrom(card, opts.exp, opts.cvc, true);
    if (typeof input === "string") {
      return {
        ok: false,
        session,
        paymentIntent: null,
        error: { type: "card_error", code: "incomplete", message: input },
        validationError: true,
      };
    }
    const result = engine.payCheckoutSession(sessionId, input, testCtx());
    persist();
    return result;
  }

  async function handleCheckoutPage(req: IncomingMessage, res: ServerResponse, path: string): Promise<boolean> {
    const page = /^\/checkout\/([^/]+)$/.exec(path);
    const submit = /^\/checkout\/([^/]+)\/pay$/.exec(path);
    if (page && req.method === "GET") {
      engine.sweep();
      const session = state.checkoutSessions[decodeURIComponent(page[1])];
      if (!session) return sendHtml(res, 404, renderNotFound()), true;
      sendHtml(res, 200, renderCheckoutPage(session, state.sessionLineItems[session.id] ?? []));
      return true;
    }
    if (submit && req.method === "POST") {
      engine.sweep();
      const session = state.checkoutSessions[decodeURIComponent(submit[1])];
      if (!session) return sendHtml(res, 404, renderNotFound()), true;
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
      const input = cardFrom(number, expiry || undefined, form.get("cvc") || undefined, false);
      let result: PayResult;
      if (!number.trim()) {
        result = { ok: false, session, paymentIntent: null, error: { type: "card_error", code: "incomplete_number", message: "Your card number is incomplete." } };
      } else if (typeof input === "string") {
        result = { ok: false, session, paymentIntent: null, error: { type: "card_error", code: "incomplete", message: input } };
      } else {
        result = engine.payCheckoutSession(session.id, input, testCtx());
        persist();
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

  async function handleTest(req: IncomingMessage, res: ServerResponse, path: string): Promise<boolean> {
    if (!path.startsWith("/_test/")) return false;
    const json = async (): Promise<Record<string, unknown>> => {
      const raw = await readBody(req);
      if (!raw) return {};
      try {
        const v = JSON.parse(raw) as unknown;
        return v && typeof v === "object" ? (v as Record<string, unknown>) : {};
      } catch {
        throw invalidRequest("Body must be JSON.");
      }
    };
    try {
      const payMatch = /^\/_test\/checkout\/([^/]+)\/pay$/.exec(path);
      if (payMatch && req.method === "POST") {
        const body = await json();
        if (typeof body.card !== "string") throw invalidRequest("card (string) is required", "parameter_missing", "card");
        const result = pay(
          decodeURIComponent(payMatch[1]),
          body.card,
          { exp: typeof body.exp === "string" ? body.exp : undefined, cvc: typeof body.cvc === "string" ? body.cvc : undefined },
        );
        const payload = { ok: result.ok, session: result.session, payment_intent: result.paymentIntent, ...(result.error ? { error: result.error } : {}) };
        send(res, result.ok ? 200 : result.validationError ? 400 : 402, JSON.stringify(payload, null, 2));
        return true;
      }
      if (path === "/_test/clock/advance" && req.method === "POST") {
        const body = await json();
        const seconds = Number(body.seconds);
        if (!Number.isFinite(seconds) || seconds < 0) throw invalidRequest("seconds must be a non-negative number", undefined, "seconds");
        advanceClock(seconds);
        send(res, 200, JSON.stringify({ now: now() }));
        return true;
      }
      if (path === "/_test/events" && req.method === "GET") {
        send(res, 200, JSON.stringify({ data: state.events }, null, 2));
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

  const server = createServer((req, res) => {
    const url = new URL(req.url ?? "/", "http://fake.invalid");
    const path = url.pathname;
    const run = async () => {
      if (path.startsWith("/v1/")) return handleApi(req, res, path, url.search.slice(1));
      if (await handleCheckoutPage(req, res, path)) return;
      if (await handleTest(req, res, path)) return;
      if (path === "/" && req.method === "GET") {
        send(res, 200, JSON.stringify({ fake: "stripe", api: "/v1", checkout: "/checkout/:sessionId" }));
        return;
      }
      send(res, 404, JSON.stringify({ error: { type: "invalid_request_error", message: `Unrecognized request URL (${req.method}: ${path}).` } }));
    };
    run().catch((err: unknown) => {
      const message = err instanceof FakeStripeError ? err.message : "internal error";
      if (!res.headersSent) send(res, err instanceof FakeStripeError ? err.status : 500, JSON.stringify({ error: { type: "api_error", message } }));
      else res.destroy();
    });
  });

  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port ?? 0, host, () => {
      server.off("error", reject);
      resolve();
    });
  });
  const port = (server.address() as AddressInfo).port;
  const urlHost = host === "0.0.0.0" || host === "::" ? "127.0.0.1" : host.includes(":") ? `[${host}]` : host;
  const url = `http://${urlHost}:${port}`;
  const browserBase = options.publicHost ? `http://${options.publicHost}:${port}` : url;
  publicBase = (options.publicBaseUrl ?? browserBase).replace(/\/+$/, "");

  // Holds lapse and sessions expire with the passage of time even when no request arrives.
  // Stripe keeps idempotency results for at least 24 hours (docs.stripe.com/api/idempotent_requests).
  const sweeper = setInterval(() => {
    engine.sweep();
    const cutoff = Date.now() - 24 * 60 * 60 * 1000;
    for (const [k, rec] of Object.entries(state.idempotency)) if (rec.storedAt < cutoff) delete state.idempotency[k];
    persist();
  }, 30_000);
  sweeper.unref();

  function advanceClock(seconds: number): void {
    state.clockOffsetSeconds += Math.floor(seconds);
    engine.sweep();
    persist();
  }

  let closed = false;
  return {
    url,
    host,
    port,
    webhookSecret: options.webhookSecret,
    get deliveries() {
      return dispatcher.deliveries;
    },
    get state() {
      return state;
    },
    async close() {
      if (closed) return;
      closed = true;
      clearInterval(sweeper);
      dispatcher.close();
      persist();
      await new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      });
    },
    setWebhookUrl(u) {
      webhookUrl = u;
    },
    idle: () => dispatcher.idle(),
    now,
    advanceClock,
    events: (type) => (type ? state.events.filter((e) => e.type === type) : [...state.events]),
    pay,
    holdDeliveries: () => dispatcher.hold(),
    releaseDeliveries: (opts) => dispatcher.release(opts),
    redeliver(eventId, opts = {}) {
      const event = engine.retrieveEvent(eventId);
      const target = opts.url ?? webhookUrl;
      if (!target) return Promise.reject(new Error("redeliver: no webhook URL set"));
      return dispatcher.redeliver(event, target, opts);
    },
    sign: (payload, ts) => signPayload(payload, options.webhookSecret, ts),
  };
}

/** A random signing secret in Stripe's format, for dev and tests. */
export function randomWebhookSecret(): string {
  return `whsec_${randomBytes(24).toString("base64url")}`;
}
