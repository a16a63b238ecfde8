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
import { randomBytes } from "node:crypto";
import { createServer, type IncomingMessage, type Server, type ServerResponse } from "node:http";
import type { AddressInfo } from "node:net";
import { handleApi } from "./api";
import { handleCheckoutPage } from "./checkout-routes";
import { advanceClock, paySession, type FakeStripeContext } from "./context";
import { FakeStripeEngine, type PayResult } from "./engine";
import { FakeStripeError } from "./errors";
import { send } from "./http";
import { loadState, saveState } from "./state-file";
import { handleTest } from "./test-controls";
import type { EventObject, FakeStripeState } from "./types";
import { signPayload, WebhookDispatcher, type DeliveryAttempt, type RetryPolicy } from "./webhooks";

export { sameKey } from "./api";
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

/** Routes one request to the API, the hosted page or the test controls. */
function handleRequest(fake: FakeStripeContext, req: IncomingMessage, res: ServerResponse): void {
  const url = new URL(req.url ?? "/", "http://fake.invalid");
  const path = url.pathname;
  const run = async () => {
    if (path.startsWith("/v1/")) return handleApi(fake, req, res, path, url.search.slice(1));
    if (await handleCheckoutPage(fake, req, res, path)) return;
    if (await handleTest(fake, req, res, path)) return;
    if (path === "/" && req.method === "GET") {
      send(res, 200, JSON.stringify({ fake: "stripe", api: "/v1", checkout: "/checkout/:sessionId" }));
      return;
    }
    const message = `Unrecognized request URL (${req.method}: ${path}).`;
    send(res, 404, JSON.stringify({ error: { type: "invalid_request_error", message } }));
  };
  run().catch((err: unknown) => {
    const message = err instanceof FakeStripeError ? err.message : "internal error";
    if (res.headersSent) {
      res.destroy();
      return;
    }
    const status = err instanceof FakeStripeError ? err.status : 500;
    send(res, status, JSON.stringify({ error: { type: "api_error", message } }));
  });
}

function listen(server: Server, port: number, host: string): Promise<void> {
  return new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(port, host, () => {
      server.off("error", reject);
      resolve();
    });
  });
}

/**
 * Holds lapse and sessions expire with the passage of time even when no request arrives.
 * Stripe keeps idempotency results for at least 24 hours (docs.stripe.com/api/idempotent_requests).
 */
function startSweeper(fake: FakeStripeContext): NodeJS.Timeout {
  const sweeper = setInterval(() => {
    fake.engine.sweep();
    const cutoff = Date.now() - 24 * 60 * 60 * 1000;
    for (const [k, rec] of Object.entries(fake.state.idempotency)) {
      if (rec.storedAt < cutoff) delete fake.state.idempotency[k];
    }
    fake.persist();
  }, 30_000);
  sweeper.unref();
  return sweeper;
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

  const fake: FakeStripeContext = { state, engine, secretKey: options.secretKey, log, now, persist };
  const server = createServer((req, res) => handleRequest(fake, req, res));

  await listen(server, options.port ?? 0, host);
  const port = (server.address() as AddressInfo).port;
  const urlHost = host === "0.0.0.0" || host === "::" ? "127.0.0.1" : host.includes(":") ? `[${host}]` : host;
  const url = `http://${urlHost}:${port}`;
  const browserBase = options.publicHost ? `http://${options.publicHost}:${port}` : url;
  publicBase = (options.publicBaseUrl ?? browserBase).replace(/\/+$/, "");

  const sweeper = startSweeper(fake);

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
    advanceClock: (seconds) => advanceClock(fake, seconds),
    events: (type) => (type ? state.events.filter((e) => e.type === type) : [...state.events]),
    pay: (sessionId, card, opts) => paySession(fake, sessionId, card, opts),
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
