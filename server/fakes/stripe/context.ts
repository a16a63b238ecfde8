/**
 * What the fake's request handlers share: one running fake's state, engine, clock, persistence and
 * options, plus the in-process operations (pay a session, move the clock) used by both the test
 * controls and the FakeStripe object.
 */
import { parseExpiry, type CardInput } from "./cards";
import { DEFAULT_API_VERSION, type FakeStripeEngine, type PayResult, type RequestContext } from "./engine";
import type { FakeStripeState } from "./types";

export interface FakeStripeContext {
  readonly state: FakeStripeState;
  readonly engine: FakeStripeEngine;
  /** When set, only this secret key is accepted; otherwise any sk_test_/rk_test_ key is. */
  readonly secretKey: string | undefined;
  readonly log: ((line: string) => void) | undefined;
  /** The fake's current time, unix seconds. */
  now(): number;
  /** Saves the state to the state file, if one is configured. */
  persist(): void;
}

export function testCtx(): RequestContext {
  return { requestId: null, idempotencyKey: null, apiVersion: DEFAULT_API_VERSION };
}

export function cardFrom(
  ctx: FakeStripeContext,
  number: string,
  exp: string | undefined,
  cvc: string | undefined,
  defaults: boolean,
): CardInput | string {
  const year = new Date(ctx.now() * 1000).getUTCFullYear();
  const expiry = exp ? parseExpiry(exp) : defaults ? { month: 12, year: year + 3 } : null;
  if (!expiry) return "Your card's expiration date is incomplete.";
  const digits = number.replace(/[\s-]/g, "");
  const cvcValue = cvc ?? (defaults ? (/^3[47]/.test(digits) ? "1234" : "123") : "");
  if (!cvcValue) return "Your card's security code is incomplete.";
  return { number, expMonth: expiry.month, expYear: expiry.year, cvc: cvcValue };
}

/** Pays a Checkout Session in-process, as the hosted page would (missing expiry/CVC get test defaults). */
export function paySession(
  ctx: FakeStripeContext,
  sessionId: string,
  card: string,
  opts: { exp?: string; cvc?: string } = {},
): PayResult {
  ctx.engine.sweep();
  const session = ctx.engine.retrieveCheckoutSession(sessionId);
  const input = cardFrom(ctx, card, opts.exp, opts.cvc, true);
  if (typeof input === "string") {
    return {
      ok: false,
      session,
      paymentIntent: null,
      error: { type: "card_error", code: "incomplete", message: input },
      validationError: true,
    };
  }
  const result = ctx.engine.payCheckoutSession(sessionId, input, testCtx());
  ctx.persist();
  return result;
}

/** Moves the fake's clock forward (lapses holds past capture_before, expires sessions). */
export function advanceClock(ctx: FakeStripeContext, seconds: number): void {
  ctx.state.clockOffsetSeconds += Math.floor(seconds);
  ctx.engine.sweep();
  ctx.persist();
}
