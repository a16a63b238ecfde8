/**
 * The payments adapter: the official `stripe` SDK, pointed either at Stripe or at the local fake
 * (server/fakes/stripe) by configuration only.
 *
 *   createStripeClient({ secretKey, apiBase })   apiBase set   → the fake (host/port/protocol options)
 *                                                apiBase unset → api.stripe.com
 *   verifyWebhook(rawBody, header, secret)       → the verified Stripe.Event, or throws WebhookVerificationError
 */
import Stripe from "stripe";

export { Stripe };

export interface StripeClientConfig {
  secretKey: string;
  /** e.g. "http://127.0.0.1:12111" for the local fake; absent → the real Stripe API. */
  apiBase?: string;
  /** Per-request timeout. Default 10 000 ms. */
  timeoutMs?: number;
  /**
   * Retries of failed requests (connection errors, 409, 5xx). Default 1. Safe because the SDK sends
   * an Idempotency-Key on every POST (node_modules/stripe/esm/RequestSender.js, _defaultIdempotencyKey)
   * and the app passes its own keys on create calls.
   */
  maxNetworkRetries?: number;
}

export function createStripeClient(config: StripeClientConfig): Stripe {
  if (!config.secretKey) throw new Error("createStripeClient: secretKey is required");
  const common = {
    maxNetworkRetries: config.maxNetworkRetries ?? 1,
    timeout: config.timeoutMs ?? 10_000,
    telemetry: false,
    appInfo: { name: "Burnline" },
  } as const;
  if (!config.apiBase) return new Stripe(config.secretKey, common);

  let base: URL;
  try {
    base = new URL(config.apiBase);
  } catch {
    throw new Error(`createStripeClient: apiBase is not a URL: ${config.apiBase}`);
  }
  if (base.protocol !== "http:" && base.protocol !== "https:") {
    throw new Error(`createStripeClient: apiBase must be http(s): ${config.apiBase}`);
  }
  if (base.pathname !== "/" && base.pathname !== "") {
    // The SDK always requests /v1/… from the host root.
    throw new Error(`createStripeClient: apiBase must not have a path: ${config.apiBase}`);
  }
  if (/^(sk|rk)_live_/.test(config.secretKey)) {
    // Never hand a live key to anything but Stripe itself.
    throw new Error("createStripeClient: refusing to send a live secret key to a custom apiBase");
  }
  const protocol = base.protocol === "http:" ? "http" : "https";
  return new Stripe(config.secretKey, {
    ...common,
    host: base.hostname.replace(/^\[(.*)\]$/, "$1"),
    port: base.port ? Number(base.port) : protocol === "http" ? 80 : 443,
    protocol,
  });
}

/** Stripe's default and the app's signature tolerance, seconds. */
export const WEBHOOK_TOLERANCE_SECONDS = 300;
/** How far in the future a signature timestamp may lie (clock skew between hosts), seconds. */
export const WEBHOOK_FUTURE_SKEW_SECONDS = 30;

export type WebhookVerificationCode =
  "signature_missing" | "signature_invalid" | "timestamp_too_old" | "timestamp_in_future";

/** A webhook that must be refused; the route answers 400 with this code. */
export class WebhookVerificationError extends Error {
  readonly status = 400;
  constructor(
    readonly code: WebhookVerificationCode,
    message: string,
  ) {
    super(message);
    this.name = "WebhookVerificationError";
  }
}

/** The timestamp the SDK reads from the header (its parseHeader keeps the last `t=`). */
function headerTimestamp(header: string): number | null {
  let t: number | null = null;
  for (const item of header.split(",")) {
    const i = item.indexOf("=");
    if (i === -1) continue;
    if (item.slice(0, i).trim() === "t") {
      const n = Number.parseInt(item.slice(i + 1), 10);
      t = Number.isFinite(n) ? n : null;
    }
  }
  return t;
}

/**
 * Verify a webhook delivery and return its event.
 *
 * - rawBody must be the exact bytes received (mount the route with a raw body parser).
 * - Signature and age: `stripe.webhooks.constructEvent` with 300 s tolerance (the SDK's check is
 *   `now − t > tolerance`, node_modules/stripe/esm/Webhooks.js validateComputedSignature).
 * - That check lets any future timestamp through, so a timestamp more than
 *   WEBHOOK_FUTURE_SKEW_SECONDS ahead of now is refused here as well.
 *
 * @param nowSeconds the current time (unix seconds); defaults to the system clock.
 */
export function verifyWebhook(
  rawBody: Buffer | string,
  signatureHeader: string | string[] | undefined,
  secret: string,
  nowSeconds: number = Math.floor(Date.now() / 1000),
): Stripe.Event {
  if (!secret) throw new Error("verifyWebhook: the webhook secret is not configured");
  const header = Array.isArray(signatureHeader) ? signatureHeader.join(",") : signatureHeader;
  if (!header) throw new WebhookVerificationError("signature_missing", "Missing Stripe-Signature header.");
  const t = headerTimestamp(header);
  if (t === null) throw new WebhookVerificationError("signature_invalid", "Stripe-Signature header has no timestamp.");

  let event: Stripe.Event;
  try {
    event = Stripe.webhooks.constructEvent(
      rawBody,
      header,
      secret,
      WEBHOOK_TOLERANCE_SECONDS,
      undefined,
      nowSeconds * 1000,
    );
  } catch (err) {
    if (err instanceof Stripe.errors.StripeSignatureVerificationError) {
      const tooOld = /tolerance/i.test(err.message);
      throw new WebhookVerificationError(
        tooOld ? "timestamp_too_old" : "signature_invalid",
        tooOld ? "Webhook timestamp is outside the 300 s tolerance." : "Webhook signature does not match.",
      );
    }
    throw new WebhookVerificationError("signature_invalid", "Webhook payload could not be verified.");
  }
  if (t > nowSeconds + WEBHOOK_FUTURE_SKEW_SECONDS) {
    throw new WebhookVerificationError("timestamp_in_future", "Webhook timestamp lies in the future.");
  }
  return event;
}
