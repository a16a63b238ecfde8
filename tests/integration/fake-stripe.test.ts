/**
 * The local Stripe fake, exercised through the official `stripe` SDK (v23) over real HTTP.
 *
 * The references for the expected behaviour are outside the project: Stripe's API reference
 * (docs.stripe.com/api), its test-card list (docs.stripe.com/testing), its manual-capture guide
 * (docs.stripe.com/payments/place-a-hold-on-a-payment-method), its webhook signature scheme
 * (docs.stripe.com/webhooks#verify-manually) and the SDK itself (the npm reference library), whose
 * error classes and `webhooks.constructEvent` act as the oracle for wire compatibility.
 */
import { createServer, type IncomingMessage, type ServerResponse } from "node:http";
import type { AddressInfo } from "node:net";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterEach, beforeEach, describe, expect, it } from "vitest";
import Stripe from "stripe";
import {
  AUTHORIZATION_VALIDITY_SECONDS,
  eventPayload,
  sameKey,
  signPayload,
  startFakeStripe,
  type FakeStripe,
} from "../../server/fakes/stripe/index";
import { createStripeClient, verifyWebhook, WebhookVerificationError } from "../../server/integrations/payments";
import { startFakes, startWebhookReceiver, TEST_STRIPE_KEY, type Fakes, type WebhookReceiver } from "../helpers/fakes";

let fakes: Fakes;
let receiver: WebhookReceiver;
let stripe: Stripe;

beforeEach(async () => {
  receiver = await startWebhookReceiver();
  fakes = await startFakes({ webhookUrl: receiver.url });
  stripe = fakes.stripeClient;
});

afterEach(async () => {
  await fakes.stop();
  await receiver.close();
});

async function testPay(fake: FakeStripe, sessionId: string, card: string) {
  const res = await fetch(`${fake.url}/_test/checkout/${sessionId}/pay`, {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify({ card }),
  });
  return {
    status: res.status,
    body: (await res.json()) as {
      ok: boolean;
      error?: Stripe.StripeRawError;
      payment_intent: Stripe.PaymentIntent | null;
    },
  };
}

async function manualCaptureSession(amount = 4900, extra: Partial<Stripe.Checkout.SessionCreateParams> = {}) {
  return stripe.checkout.sessions.create(
    {
      mode: "payment",
      line_items: [
        {
          quantity: 1,
          price_data: { currency: "usd", unit_amount: amount, product_data: { name: "Second opinion, standard" } },
        },
      ],
      payment_intent_data: { capture_method: "manual", metadata: { case_id: "case_1" } },
      success_url: "http://127.0.0.1:9/cases/case_1?paid={CHECKOUT_SESSION_ID}",
      cancel_url: "http://127.0.0.1:9/cases/case_1",
      metadata: { case_id: "case_1" },
      ...extra,
    },
    { idempotencyKey: `submit-${Math.random()}` },
  );
}

async function authorised(amount = 4900) {
  const session = await manualCaptureSession(amount);
  const paid = await testPay(fakes.stripe, session.id, "4242 4242 4242 4242");
  expect(paid.status).toBe(200);
  const pi = await stripe.paymentIntents.retrieve(paid.body.payment_intent!.id);
  return { session, pi };
}

describe("customers", () => {
  it("creates and retrieves a customer with Stripe's object shape", async () => {
    // Shape per docs.stripe.com/api/customers/object: id prefix cus_, object "customer", created in
    // unix seconds (from the fake's clock, fixed here), livemode false.
    const fixedNow = 1_900_000_000; // 2030-03-17T17:46:40Z
    const own = await startFakes({ stripe: { now: () => fixedNow } });
    try {
      const c = await own.stripeClient.customers.create({
        email: "owner@burnline.test",
        name: "Veltra Motors",
        metadata: { shop_id: "s1" },
      });
      expect(c.id).toMatch(/^cus_/);
      expect(c.object).toBe("customer");
      expect(c.livemode).toBe(false);
      expect(c.created).toBe(fixedNow);
      expect(c.metadata).toEqual({ shop_id: "s1" });
      const again = await own.stripeClient.customers.retrieve(c.id);
      expect(again).toMatchObject({ id: c.id, email: "owner@burnline.test", name: "Veltra Motors", created: fixedNow });
      own.stripe.advanceClock(90);
      expect((await own.stripeClient.customers.create({ email: "later@burnline.test" })).created).toBe(fixedNow + 90);
    } finally {
      await own.stop();
    }
  });

  it("answers an unknown id with 404 resource_missing (StripeInvalidRequestError in the SDK)", async () => {
    // docs.stripe.com/error-codes#resource-missing; SDK mapping: stripe/esm/Error.js generateV1Error (404 → invalid request).
    const err = await stripe.customers.retrieve("cus_doesnotexist").catch((e: unknown) => e);
    expect(err).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    expect(err).toMatchObject({ statusCode: 404, code: "resource_missing", type: "StripeInvalidRequestError" });
  });

  it("refuses an unknown parameter like Stripe (parameter_unknown)", async () => {
    // docs.stripe.com/error-codes#parameter-unknown
    const err = await stripe.customers
      .create({ email: "a@b.test", colour: "red" } as Stripe.CustomerCreateParams)
      .catch((e: unknown) => e);
    expect(err).toMatchObject({ statusCode: 400, code: "parameter_unknown", param: "colour" });
  });
});

describe("checkout with manual capture", () => {
  it("creates an open session whose intent appears only at payment time", async () => {
    // docs.stripe.com/api/checkout/sessions/object: status "open", payment_status "unpaid",
    // amount_total = Σ unit_amount × quantity; payment_intent is created when the customer pays (API ≥ 2022-08-01).
    const session = await stripe.checkout.sessions.create({
      mode: "payment",
      line_items: [
        {
          quantity: 2,
          price_data: { currency: "usd", unit_amount: 1250, product_data: { name: "Extra trace review" } },
        },
        { quantity: 1, price_data: { currency: "usd", unit_amount: 4900, product_data: { name: "Second opinion" } } },
      ],
      payment_intent_data: { capture_method: "manual" },
      success_url: "http://127.0.0.1:9/ok",
    });
    expect(session.id).toMatch(/^cs_test_/);
    expect(session.object).toBe("checkout.session");
    expect(session.amount_total).toBe(2 * 1250 + 4900);
    expect(session.status).toBe("open");
    expect(session.payment_status).toBe("unpaid");
    expect(session.payment_intent).toBeNull();
    expect(session.url).toBe(`${fakes.stripe.url}/checkout/${session.id}`);
    const items = await stripe.checkout.sessions.listLineItems(session.id);
    expect(items.data.map((i) => [i.description, i.quantity, i.amount_total])).toEqual([
      ["Extra trace review", 2, 2500],
      ["Second opinion", 1, 4900],
    ]);
  });

  it("4242 authorises: intent requires_capture with a 7-day capture_before, session complete, signed webhooks delivered", async () => {
    const session = await manualCaptureSession(4900);
    const paid = await testPay(fakes.stripe, session.id, "4242 4242 4242 4242");
    expect(paid.status).toBe(200);

    // Manual capture (docs.stripe.com/payments/place-a-hold-on-a-payment-method): the intent waits in
    // requires_capture with the whole amount capturable and nothing received yet.
    const pi = await stripe.paymentIntents.retrieve(paid.body.payment_intent!.id, { expand: ["latest_charge"] });
    expect(pi.id).toMatch(/^pi_/);
    expect(pi.status).toBe("requires_capture");
    expect(pi.amount_capturable).toBe(4900);
    expect(pi.amount_received).toBe(0);
    expect(pi.metadata).toEqual({ case_id: "case_1" });
    const charge = pi.latest_charge as Stripe.Charge;
    expect(charge.id).toMatch(/^ch_/);
    expect(charge.captured).toBe(false);
    // Online card authorisations are valid for 7 days (same guide, "Authorization validity windows").
    expect(charge.payment_method_details!.card!.capture_before! - charge.created).toBe(7 * 24 * 60 * 60);
    expect(AUTHORIZATION_VALIDITY_SECONDS).toBe(7 * 24 * 60 * 60);

    const s = await stripe.checkout.sessions.retrieve(session.id);
    expect(s.status).toBe("complete");
    // For a hold, payment_status stays "unpaid" (from memory of Stripe's behaviour: funds not yet captured).
    expect(s.payment_status).toBe("unpaid");
    expect(s.payment_intent).toBe(pi.id);

    await fakes.stripe.idle();
    const types = receiver.received.map((r) => JSON.parse(r.rawBody.toString("utf8")).type as string);
    expect(types).toEqual(
      expect.arrayContaining(["checkout.session.completed", "payment_intent.amount_capturable_updated"]),
    );
    // Every delivery passes the SDK's own signature check (oracle: stripe.webhooks.constructEvent, 300 s tolerance).
    for (const r of receiver.received) {
      const ev = stripe.webhooks.constructEvent(
        r.rawBody,
        String(r.headers["stripe-signature"]),
        fakes.webhookSecret,
        300,
      );
      expect(ev.id).toMatch(/^evt_/);
      expect(ev.object).toBe("event");
      expect(ev.livemode).toBe(false);
    }
    const completed = receiver.received
      .map((r) => JSON.parse(r.rawBody.toString("utf8")) as Stripe.Event)
      .find((e) => e.type === "checkout.session.completed")!;
    const obj = completed.data.object as Stripe.Checkout.Session;
    expect(obj.id).toBe(session.id);
    expect(obj.metadata).toEqual({ case_id: "case_1" });
    expect(obj.payment_intent).toBe(pi.id);
  });

  it("capture moves the intent to succeeded and emits payment_intent.succeeded and charge.captured", async () => {
    const { pi } = await authorised(4900);
    // docs.stripe.com/api/payment_intents/capture: status → succeeded, amount_received = captured amount.
    const captured = await stripe.paymentIntents.capture(pi.id, {}, { idempotencyKey: `capture-${pi.id}` });
    expect(captured.status).toBe("succeeded");
    expect(captured.amount_received).toBe(4900);
    expect(captured.amount_capturable).toBe(0);
    const charge = await stripe.charges.retrieve(captured.latest_charge as string);
    expect(charge.captured).toBe(true);
    expect(charge.amount_captured).toBe(4900);
    await fakes.stripe.idle();
    const types = fakes.stripe.events().map((e) => e.type);
    expect(types).toEqual(expect.arrayContaining(["payment_intent.succeeded", "charge.captured"]));
    // "Authorized payments can only be captured once" (same guide): a second capture is refused.
    const again = await stripe.paymentIntents.capture(pi.id).catch((e: unknown) => e);
    expect(again).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    expect(again).toMatchObject({ statusCode: 400, code: "payment_intent_unexpected_state" });
  });

  it("captures less than authorised with amount_to_capture, and never more", async () => {
    const { pi } = await authorised(4900);
    // docs.stripe.com/api/payment_intents/capture#amount_to_capture: at most amount_capturable.
    const tooMuch = await stripe.paymentIntents.capture(pi.id, { amount_to_capture: 5000 }).catch((e: unknown) => e);
    expect(tooMuch).toMatchObject({ statusCode: 400, param: "amount_to_capture" });
    const part = await stripe.paymentIntents.capture(pi.id, { amount_to_capture: 3000 });
    expect(part.amount_received).toBe(3000);
    expect(part.status).toBe("succeeded");
  });

  it("cancel releases the hold; a later capture is refused", async () => {
    const { pi } = await authorised(4900);
    // docs.stripe.com/api/payment_intents/cancel: requires_capture may be canceled → status canceled.
    const canceled = await stripe.paymentIntents.cancel(pi.id, { cancellation_reason: "abandoned" });
    expect(canceled.status).toBe("canceled");
    expect(canceled.cancellation_reason).toBe("abandoned");
    expect(canceled.amount_capturable).toBe(0);
    expect(canceled.amount_received).toBe(0);
    const err = await stripe.paymentIntents.capture(pi.id).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    expect(err).toMatchObject({ code: "payment_intent_unexpected_state" });
    await fakes.stripe.idle();
    expect(
      fakes.stripe.events("payment_intent.canceled").map((e) => (e.data.object as Stripe.PaymentIntent).id),
    ).toEqual([pi.id]);
    const balance = await stripe.balance.retrieve();
    expect(balance.available.find((b) => b.currency === "usd")?.amount ?? 0).toBe(0);
  });

  it("refuses capture after capture_before: the hold has lapsed", async () => {
    const { pi } = await authorised(4900);
    // Past capture_before the authorisation expires, funds are released and the intent becomes
    // canceled (docs.stripe.com/payments/place-a-hold-on-a-payment-method); Stripe's error code for
    // capturing an expired authorisation is charge_expired_for_capture (docs.stripe.com/error-codes).
    fakes.stripe.advanceClock(AUTHORIZATION_VALIDITY_SECONDS + 1);
    const err = await stripe.paymentIntents.capture(pi.id).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    expect(err).toMatchObject({ statusCode: 400, code: "charge_expired_for_capture" });
    const after = await stripe.paymentIntents.retrieve(pi.id);
    expect(after.status).toBe("canceled");
    expect(after.amount_received).toBe(0);
  });

  it("still captures one minute before capture_before", async () => {
    const { pi } = await authorised(4900);
    fakes.stripe.advanceClock(AUTHORIZATION_VALIDITY_SECONDS - 60);
    const captured = await stripe.paymentIntents.capture(pi.id);
    expect(captured.status).toBe("succeeded");
  });

  it("will not cancel the intent of a still-open session (expire the session instead)", async () => {
    const session = await manualCaptureSession(4900);
    const declined = await testPay(fakes.stripe, session.id, "4000000000000002");
    const err = await stripe.paymentIntents.cancel(declined.body.payment_intent!.id).catch((e: unknown) => e);
    expect(err).toMatchObject({ statusCode: 400, code: "payment_intent_unexpected_state" });
    // docs.stripe.com/api/checkout/sessions/expire: an open session can be expired; status → expired.
    const expired = await stripe.checkout.sessions.expire(session.id);
    expect(expired.status).toBe("expired");
    const pi = await stripe.paymentIntents.retrieve(declined.body.payment_intent!.id);
    expect(pi.status).toBe("canceled");
    const late = await testPay(fakes.stripe, session.id, "4242424242424242");
    expect(late.body.ok).toBe(false);
    const twice = await stripe.checkout.sessions.expire(session.id).catch((e: unknown) => e);
    expect(twice).toMatchObject({ statusCode: 400 });
  });
});

describe("test cards", () => {
  // Card numbers and outcomes: docs.stripe.com/testing ("Declined payments").
  it.each([
    ["4000 0000 0000 0002", "generic_decline", "Your card was declined."],
    ["4000 0000 0000 9995", "insufficient_funds", "Your card has insufficient funds."],
  ])("%s on the checkout leaves the intent unauthorised (%s)", async (card, declineCode, message) => {
    const session = await manualCaptureSession(4900);
    const res = await testPay(fakes.stripe, session.id, card);
    expect(res.status).toBe(402);
    expect(res.body.error).toMatchObject({
      type: "card_error",
      code: "card_declined",
      decline_code: declineCode,
      message,
    });
    const pi = await stripe.paymentIntents.retrieve(res.body.payment_intent!.id);
    expect(pi.status).toBe("requires_payment_method");
    expect(pi.amount_capturable).toBe(0);
    expect(pi.last_payment_error).toMatchObject({
      type: "card_error",
      code: "card_declined",
      decline_code: declineCode,
    });
    const s = await stripe.checkout.sessions.retrieve(session.id);
    expect(s.status).toBe("open");
    await fakes.stripe.idle();
    const types = fakes.stripe.events().map((e) => e.type);
    expect(types).toContain("payment_intent.payment_failed");
    expect(types).not.toContain("payment_intent.amount_capturable_updated");
    expect(types).not.toContain("checkout.session.completed");
  });

  it.each([
    ["pm_card_chargeDeclined", "generic_decline"],
    ["pm_card_chargeDeclinedInsufficientFunds", "insufficient_funds"],
  ])("confirming with %s throws StripeCardError (%s)", async (pm, declineCode) => {
    // Test PaymentMethod tokens: docs.stripe.com/testing; 402 → StripeCardError (stripe/esm/Error.js).
    const err = await stripe.paymentIntents
      .create({ amount: 4900, currency: "usd", capture_method: "manual", payment_method: pm, confirm: true })
      .catch((e: unknown) => e);
    expect(err).toBeInstanceOf(Stripe.errors.StripeCardError);
    const cardErr = err as Stripe.errors.StripeCardError;
    expect(cardErr.statusCode).toBe(402);
    expect(cardErr.code).toBe("card_declined");
    expect(cardErr.decline_code).toBe(declineCode);
    expect(cardErr.payment_intent?.status).toBe("requires_payment_method");
  });

  it("confirming with pm_card_visa and manual capture authorises", async () => {
    const pi = await stripe.paymentIntents.create({
      amount: 4900,
      currency: "usd",
      capture_method: "manual",
      payment_method: "pm_card_visa",
      confirm: true,
    });
    expect(pi.status).toBe("requires_capture");
    expect(pi.amount_capturable).toBe(4900);
  });

  it("refuses a Luhn-invalid number as incorrect and accepts the Mastercard test card", async () => {
    const session = await manualCaptureSession(4900);
    // 4242 4242 4242 4241 fails the Luhn check (ISO/IEC 7812-1): refused before any charge.
    const bad = await testPay(fakes.stripe, session.id, "4242 4242 4242 4241");
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatchObject({ code: "incorrect_number" });
    expect(bad.body.payment_intent).toBeNull();
    // 5555 5555 5555 4444 is Stripe's Mastercard test number (docs.stripe.com/testing), Luhn-valid.
    const good = await testPay(fakes.stripe, session.id, "5555 5555 5555 4444");
    expect(good.status).toBe(200);
    const pi = await stripe.paymentIntents.retrieve(good.body.payment_intent!.id, { expand: ["payment_method"] });
    expect(pi.status).toBe("requires_capture");
    expect((pi.payment_method as Stripe.PaymentMethod).card).toMatchObject({ brand: "mastercard", last4: "4444" });
  });
});

describe("only test cards", () => {
  // 4111 1111 1111 1111 passes the Luhn check (ISO/IEC 7812-1 Annex B: digit sum with every second
  // digit doubled from the right = 30, a multiple of 10) but is not on the fake's list.
  const notListed = "4111 1111 1111 1111";

  it("refuses a Luhn-valid number that is not a listed test card, before any intent or payment method exists", async () => {
    const session = await manualCaptureSession(4900);
    const res = await testPay(fakes.stripe, session.id, notListed);
    expect(res.body.ok).toBe(false);
    // docs.stripe.com/error-codes#card-declined: a refused card is a card_error with code card_declined.
    expect(res.body.error).toMatchObject({ type: "card_error", code: "card_declined" });
    expect(res.body.error!.message).toContain("Use one of the test cards listed on this page");
    expect(res.body.payment_intent).toBeNull();
    expect(Object.keys(fakes.stripe.state.paymentMethods)).toEqual([]);
    expect(Object.keys(fakes.stripe.state.charges)).toEqual([]);
    expect(JSON.stringify(fakes.stripe.state)).not.toContain("4111111111111111");
    const s = await stripe.checkout.sessions.retrieve(session.id);
    expect(s.status).toBe("open");
    // a listed card still goes through on the same session
    expect((await testPay(fakes.stripe, session.id, "4242 4242 4242 4242")).status).toBe(200);
  });

  it("the hosted page lists the accepted test cards and shows the refusal of another number", async () => {
    const session = await manualCaptureSession(4900);
    const html = await (await fetch(session.url!)).text();
    // docs.stripe.com/testing: the test numbers and their outcomes.
    for (const n of [
      "4242 4242 4242 4242",
      "4000 0000 0000 0002",
      "4000 0000 0000 9995",
      "4000 0000 0000 0069",
      "4000 0000 0000 0127",
      "5555 5555 5555 4444",
    ]) {
      expect(html).toContain(`<code>${n}</code>`);
    }
    const form = new URLSearchParams({ card_number: notListed, expiry: "12/40", cvc: "123" });
    const res = await fetch(`${fakes.stripe.url}/checkout/${session.id}/pay`, {
      method: "POST",
      body: form,
      redirect: "manual",
    });
    expect(res.status).toBe(400);
    const page = await res.text();
    expect(page).toContain('role="alert"');
    expect(page).toContain("Use one of the test cards listed on this page");
    expect(Object.keys(fakes.stripe.state.paymentMethods)).toEqual([]);
  });

  it("keeps brand and last 4 only: no card number in memory or in the state file, and a stored payment method still confirms after a restart", async () => {
    const dir = mkdtempSync(join(tmpdir(), "fake-stripe-cards-"));
    try {
      const stateFile = join(dir, "state.json");
      const first = await startFakeStripe({ webhookSecret: "whsec_x", stateFile });
      const c1 = createStripeClient({ secretKey: TEST_STRIPE_KEY, apiBase: first.url, maxNetworkRetries: 0 });
      const session = await c1.checkout.sessions.create({
        mode: "payment",
        line_items: [
          { quantity: 1, price_data: { currency: "usd", unit_amount: 4900, product_data: { name: "Second opinion" } } },
        ],
        payment_intent_data: { capture_method: "manual" },
        success_url: "http://127.0.0.1:9/ok",
      });
      expect(first.pay(session.id, "4000 0000 0000 0002").ok).toBe(false);
      const paid = first.pay(session.id, "4242 4242 4242 4242");
      expect(paid.ok).toBe(true);
      const viaToken = await c1.paymentIntents.create({
        amount: 4900,
        currency: "usd",
        capture_method: "manual",
        payment_method: "pm_card_mastercard",
      });
      await first.close();

      const saved = readFileSync(stateFile, "utf8");
      for (const digits of ["4242424242424242", "4000000000000002", "5555555555554444"]) {
        expect(saved).not.toContain(digits);
        expect(JSON.stringify(first.state)).not.toContain(digits);
      }
      // docs.stripe.com/api/payment_methods/object: card.brand and card.last4 describe the card.
      const pms = Object.values(first.state.paymentMethods)
        .map((pm) => [pm.card.brand, pm.card.last4])
        .sort();
      expect(pms).toEqual([
        ["mastercard", "4444"],
        ["visa", "0002"],
        ["visa", "4242"],
      ]);

      const second = await startFakeStripe({ webhookSecret: "whsec_x", stateFile });
      try {
        const c2 = createStripeClient({ secretKey: TEST_STRIPE_KEY, apiBase: second.url, maxNetworkRetries: 0 });
        const confirmed = await c2.paymentIntents.confirm(viaToken.id);
        expect(confirmed.status).toBe("requires_capture");
        expect(confirmed.amount_capturable).toBe(4900);
      } finally {
        await second.close();
      }
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it("does not read back card numbers from a state file written by an earlier version", async () => {
    const dir = mkdtempSync(join(tmpdir(), "fake-stripe-old-"));
    try {
      const stateFile = join(dir, "state.json");
      const first = await startFakeStripe({ webhookSecret: "whsec_x", stateFile });
      await first.close();
      const old = JSON.parse(readFileSync(stateFile, "utf8")) as Record<string, unknown>;
      writeFileSync(stateFile, JSON.stringify({ ...old, paymentMethodNumbers: { pm_old: "4242424242424242" } }));
      const second = await startFakeStripe({ webhookSecret: "whsec_x", stateFile });
      expect(JSON.stringify(second.state)).not.toContain("4242424242424242");
      await second.close();
      expect(readFileSync(stateFile, "utf8")).not.toContain("4242424242424242");
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe("idempotency", () => {
  // docs.stripe.com/api/idempotent_requests: same key → the first result is returned again;
  // the same key with other parameters → idempotency_error (StripeIdempotencyError in the SDK).
  const params: Stripe.PaymentIntentCreateParams = {
    amount: 4900,
    currency: "usd",
    capture_method: "manual",
    metadata: { case_id: "c9" },
  };

  it("replays the first answer for the same key and parameters", async () => {
    const first = await stripe.paymentIntents.create(params, { idempotencyKey: "case-c9-submit-1" });
    const second = await stripe.paymentIntents.create(params, { idempotencyKey: "case-c9-submit-1" });
    expect(second.id).toBe(first.id);
    expect(second.lastResponse.headers["idempotent-replayed"]).toBe("true");
    expect(Object.keys(fakes.stripe.state.paymentIntents)).toEqual([first.id]);
  });

  it("refuses the same key with other parameters", async () => {
    await stripe.paymentIntents.create(params, { idempotencyKey: "case-c9-submit-2" });
    const err = await stripe.paymentIntents
      .create({ ...params, amount: 9900 }, { idempotencyKey: "case-c9-submit-2" })
      .catch((e: unknown) => e);
    expect(err).toBeInstanceOf(Stripe.errors.StripeIdempotencyError);
    expect(err).toMatchObject({ statusCode: 400, type: "StripeIdempotencyError" });
    expect(Object.keys(fakes.stripe.state.paymentIntents)).toHaveLength(1);
  });

  it("replays a card decline too (the request had started executing)", async () => {
    const declined = {
      amount: 4900,
      currency: "usd",
      payment_method: "pm_card_chargeDeclined",
      confirm: true,
    } as const;
    const attempt = () =>
      stripe.paymentIntents.create(declined, { idempotencyKey: "decline-1" }).then(
        () => null,
        (e: Stripe.errors.StripeCardError) => e,
      );
    const a = await attempt();
    const b = await attempt();
    expect(a).toBeInstanceOf(Stripe.errors.StripeCardError);
    expect(b).toBeInstanceOf(Stripe.errors.StripeCardError);
    expect(b!.payment_intent?.id).toBe(a!.payment_intent?.id);
    expect(b!.headers?.["idempotent-replayed"]).toBe("true");
    expect(Object.keys(fakes.stripe.state.paymentIntents)).toHaveLength(1);
  });
});

describe("refunds, accounts, transfers", () => {
  it("refunds part and then the rest of a captured payment, never more", async () => {
    const { pi } = await authorised(4900);
    await stripe.paymentIntents.capture(pi.id);
    // docs.stripe.com/api/refunds/create: refund against a payment_intent; amount defaults to the remainder.
    const r1 = await stripe.refunds.create(
      { payment_intent: pi.id, amount: 1900 },
      { idempotencyKey: `refund-${pi.id}-1` },
    );
    expect(r1.id).toMatch(/^re_/);
    expect(r1).toMatchObject({ object: "refund", amount: 1900, status: "succeeded", payment_intent: pi.id });
    const over = await stripe.refunds.create({ payment_intent: pi.id, amount: 3001 }).catch((e: unknown) => e);
    expect(over).toMatchObject({ statusCode: 400, code: "amount_too_large" });
    const r2 = await stripe.refunds.create({ payment_intent: pi.id });
    expect(r2.amount).toBe(3000);
    const charge = await stripe.charges.retrieve(r1.charge as string);
    expect(charge.amount_refunded).toBe(4900);
    expect(charge.refunded).toBe(true);
    const again = await stripe.refunds.create({ payment_intent: pi.id }).catch((e: unknown) => e);
    expect(again).toMatchObject({ code: "charge_already_refunded" });
    await fakes.stripe.idle();
    expect(fakes.stripe.events("charge.refunded")).toHaveLength(2);
    expect(fakes.stripe.events("refund.created")).toHaveLength(2);
  });

  it("refuses to refund an uncaptured hold (cancel it instead)", async () => {
    const { pi } = await authorised(4900);
    const err = await stripe.refunds.create({ payment_intent: pi.id }).catch((e: unknown) => e);
    expect(err).toMatchObject({ statusCode: 400, code: "payment_intent_unexpected_state" });
  });

  it("pays an expert's share to a connected account with a transfer", async () => {
    const { pi } = await authorised(4900);
    const captured = await stripe.paymentIntents.capture(pi.id);
    // docs.stripe.com/api/accounts/create and /api/transfers/create.
    const acct = await stripe.accounts.create({
      type: "express",
      country: "US",
      email: "expert@burnline.test",
      capabilities: { transfers: { requested: true } },
    });
    expect(acct.id).toMatch(/^acct_/);
    expect(acct.capabilities?.transfers).toBe("active");
    const tr = await stripe.transfers.create(
      {
        amount: 3430,
        currency: "usd",
        destination: acct.id,
        source_transaction: captured.latest_charge as string,
        metadata: { case_id: "case_1" },
      },
      { idempotencyKey: "payout-case_1" },
    );
    expect(tr.id).toMatch(/^tr_/);
    expect(tr).toMatchObject({ object: "transfer", amount: 3430, currency: "usd", destination: acct.id });
    // 4900 captured − 3430 transferred stay with the platform.
    const balance = await stripe.balance.retrieve();
    expect(balance.available.find((b) => b.currency === "usd")?.amount).toBe(4900 - 3430);
    const tooMuch = await stripe.transfers
      .create({
        amount: 1471,
        currency: "usd",
        destination: acct.id,
        source_transaction: captured.latest_charge as string,
      })
      .catch((e: unknown) => e);
    expect(tooMuch).toMatchObject({ statusCode: 400, code: "balance_insufficient" });
    const unknown = await stripe.transfers
      .create({ amount: 100, currency: "usd", destination: "acct_missing" })
      .catch((e: unknown) => e);
    expect(unknown).toMatchObject({ statusCode: 400, code: "resource_missing", param: "destination" });
    await fakes.stripe.idle();
    expect(fakes.stripe.events("transfer.created").map((e) => (e.data.object as Stripe.Transfer).id)).toEqual([tr.id]);
  });
});

describe("webhook delivery", () => {
  it("retries with back-off while the receiver answers 500, until it answers 200", async () => {
    receiver.respondWith([500, 500]);
    const c = await stripe.customers.create({ email: "retry@burnline.test" });
    await fakes.stripe.idle();
    const attempts = fakes.stripe.deliveries.filter((d) => d.eventType === "customer.created");
    expect(attempts.map((a) => [a.attempt, a.status])).toEqual([
      [1, 500],
      [2, 500],
      [3, 200],
    ]);
    // Exponential back-off, base 20 ms in the test helper: the delay after failed attempt n is 20·2^(n−1) ms
    // (the doubling schedule Stripe describes for webhook retries, docs.stripe.com/webhooks#retries, scaled down).
    expect(attempts.map((a) => a.retryInMs)).toEqual([20, 40, undefined]);
    // Every attempt carries the same event, each freshly signed.
    const bodies = receiver.received.map((r) => JSON.parse(r.rawBody.toString("utf8")) as Stripe.Event);
    expect(new Set(bodies.map((b) => b.id)).size).toBe(1);
    expect((bodies[0].data.object as Stripe.Customer).id).toBe(c.id);
  });

  it("gives up after maxAttempts", async () => {
    receiver.respondWith([500, 500, 500, 500, 500, 500]);
    await stripe.customers.create({ email: "down@burnline.test" });
    await fakes.stripe.idle();
    expect(fakes.stripe.deliveries.map((d) => d.status)).toEqual([500, 500, 500, 500, 500]);
    expect(fakes.stripe.deliveries.map((d) => d.retryInMs)).toEqual([20, 40, 80, 160, undefined]);
  });

  it("answers the API call without waiting for the webhook receiver", async () => {
    // A receiver that does not answer until released.
    const pending: ServerResponse[] = [];
    const slow = createServer((_req: IncomingMessage, res) => {
      _req.resume();
      pending.push(res);
    });
    await new Promise<void>((r) => slow.listen(0, "127.0.0.1", r));
    fakes.stripe.setWebhookUrl(`http://127.0.0.1:${(slow.address() as AddressInfo).port}/hook`);
    const c = await stripe.customers.create({ email: "slow@burnline.test" });
    expect(c.id).toMatch(/^cus_/);
    // The API answered while the delivery is still unanswered.
    expect(fakes.stripe.deliveries).toHaveLength(0);
    await expect.poll(() => pending.length).toBe(1);
    for (const res of pending) res.writeHead(200).end();
    await fakes.stripe.idle();
    expect(fakes.stripe.deliveries.map((d) => d.status)).toEqual([200]);
    await new Promise<void>((r) => {
      slow.close(() => r());
      slow.closeAllConnections();
    });
  });

  it("can hold deliveries and release them in reverse order", async () => {
    fakes.stripe.holdDeliveries();
    const a = await stripe.customers.create({ email: "a@burnline.test" });
    const b = await stripe.customers.create({ email: "b@burnline.test" });
    await fakes.stripe.idle();
    expect(receiver.received).toHaveLength(0);
    fakes.stripe.releaseDeliveries({ reverse: true });
    await fakes.stripe.idle();
    const ids = receiver.received.map(
      (r) => ((JSON.parse(r.rawBody.toString("utf8")) as Stripe.Event).data.object as Stripe.Customer).id,
    );
    expect(ids.sort()).toEqual([a.id, b.id].sort());
  });
});

describe("verifyWebhook", () => {
  const secret = "whsec_test_verify_secret";
  const event = {
    id: "evt_test_1",
    object: "event",
    api_version: "2026-10-28.endive",
    created: 1_760_000_000,
    data: { object: { id: "pi_test_1", object: "payment_intent", status: "requires_capture" } },
    livemode: false,
    pending_webhooks: 1,
    request: { id: null, idempotency_key: null },
    type: "payment_intent.amount_capturable_updated",
  };
  const payload = JSON.stringify(event, null, 2);
  const now = 1_760_000_500;
  const codeOf = (fn: () => unknown) => {
    try {
      fn();
    } catch (e) {
      if (e instanceof WebhookVerificationError) return e.code;
      throw e;
    }
    return "accepted";
  };

  it("accepts a fresh, correctly signed event", () => {
    const header = signPayload(payload, secret, now);
    // The scheme is Stripe's: the SDK's own test-header generator yields the same header.
    expect(header).toBe(Stripe.webhooks.generateTestHeaderString({ payload, secret, timestamp: now }));
    const ev = verifyWebhook(Buffer.from(payload), header, secret, now);
    expect(ev.id).toBe("evt_test_1");
    expect(ev.type).toBe("payment_intent.amount_capturable_updated");
  });

  it("refuses a wrong secret", () => {
    const header = signPayload(payload, "whsec_someone_else", now);
    expect(codeOf(() => verifyWebhook(Buffer.from(payload), header, secret, now))).toBe("signature_invalid");
  });

  it("refuses a body with one changed byte", () => {
    const header = signPayload(payload, secret, now);
    const tampered = Buffer.from(payload);
    const i = tampered.indexOf("requires_capture");
    tampered[i] = "R".charCodeAt(0);
    expect(codeOf(() => verifyWebhook(tampered, header, secret, now))).toBe("signature_invalid");
  });

  it("refuses a timestamp 301 s old and accepts one 300 s old (300 s tolerance)", () => {
    expect(
      codeOf(() => verifyWebhook(Buffer.from(payload), signPayload(payload, secret, now - 301), secret, now)),
    ).toBe("timestamp_too_old");
    expect(
      codeOf(() => verifyWebhook(Buffer.from(payload), signPayload(payload, secret, now - 300), secret, now)),
    ).toBe("accepted");
  });

  it("refuses a timestamp 600 s in the future, which the SDK alone lets through", () => {
    const header = signPayload(payload, secret, now + 600);
    // The SDK checks only age (now − t > tolerance): stripe/esm/Webhooks.js validateComputedSignature.
    expect(Stripe.webhooks.constructEvent(payload, header, secret, 300, undefined, now * 1000).id).toBe("evt_test_1");
    expect(codeOf(() => verifyWebhook(Buffer.from(payload), header, secret, now))).toBe("timestamp_in_future");
  });

  it("refuses a missing header", () => {
    expect(codeOf(() => verifyWebhook(Buffer.from(payload), undefined, secret, now))).toBe("signature_missing");
  });

  it("verifies what the fake actually delivers, with the real clock", async () => {
    await stripe.customers.create({ email: "verify@burnline.test" });
    await fakes.stripe.idle();
    const r = receiver.received[0];
    const ev = verifyWebhook(r.rawBody, r.headers["stripe-signature"], fakes.webhookSecret);
    expect(ev.type).toBe("customer.created");
    expect(r.rawBody.toString("utf8")).toBe(eventPayload(fakes.stripe.events("customer.created")[0]));
  });
});

describe("hosted checkout page", () => {
  it("shows a labelled card form, pays with 4242 and redirects (303) to success_url with the session id", async () => {
    const session = await manualCaptureSession(4900);
    const page = await fetch(session.url!);
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).toContain("<title>Test checkout</title>");
    expect(html).toMatch(/<label for="card-number">Card number<\/label>/);
    expect(html).toMatch(/<input id="card-number"/);
    expect(html).toMatch(/<button type="submit">Pay<\/button>/);
    expect(html).toContain("$49.00");
    expect(html).toContain('href="http://127.0.0.1:9/cases/case_1"');

    const form = new URLSearchParams({ card_number: "4242 4242 4242 4242", expiry: "12 / 40", cvc: "123" });
    const res = await fetch(`${fakes.stripe.url}/checkout/${session.id}/pay`, {
      method: "POST",
      body: form,
      redirect: "manual",
    });
    expect(res.status).toBe(303);
    expect(res.headers.get("location")).toBe(`http://127.0.0.1:9/cases/case_1?paid=${session.id}`);
    const s = await stripe.checkout.sessions.retrieve(session.id, { expand: ["payment_intent"] });
    expect((s.payment_intent as Stripe.PaymentIntent).status).toBe("requires_capture");
  });

  it("shows the decline message on the page and stays on it", async () => {
    const session = await manualCaptureSession(4900);
    const form = new URLSearchParams({ card_number: "4000 0000 0000 0002", expiry: "12/40", cvc: "123" });
    const res = await fetch(`${fakes.stripe.url}/checkout/${session.id}/pay`, {
      method: "POST",
      body: form,
      redirect: "manual",
    });
    expect(res.status).toBe(402);
    const html = await res.text();
    expect(html).toContain('role="alert"');
    expect(html).toContain("Your card was declined.");
  });

  it("escapes session data in the page", async () => {
    const session = await stripe.checkout.sessions.create({
      mode: "payment",
      line_items: [
        {
          quantity: 1,
          price_data: { currency: "usd", unit_amount: 4900, product_data: { name: '<script>alert("x")</script>' } },
        },
      ],
      success_url: "http://127.0.0.1:9/ok",
    });
    const html = await (await fetch(session.url!)).text();
    expect(html).not.toContain("<script>alert");
    expect(html).toContain("&lt;script&gt;");
  });
});

describe("configuration", () => {
  it("refuses to send a live key to a custom apiBase", () => {
    expect(() => createStripeClient({ secretKey: "sk_live_abc", apiBase: fakes.stripe.url })).toThrow(
      /live secret key/,
    );
  });

  it("with a configured secret key, accepts exactly that key and refuses others of the same or another length", async () => {
    const own = await startFakes({ stripe: { secretKey: "sk_test_exactly_this_key" } });
    try {
      const call = (key: string) =>
        fetch(`${own.stripe.url}/v1/balance`, { headers: { authorization: `Bearer ${key}` } });
      expect((await call("sk_test_exactly_this_key")).status).toBe(200);
      // docs.stripe.com/api/authentication: a wrong key answers 401.
      for (const wrong of [
        "sk_test_exactly_this_kex",
        "sk_test_exactly_this_ke",
        "sk_test_exactly_this_key_",
        "sk_test_other",
      ]) {
        const res = await call(wrong);
        expect(res.status, wrong).toBe(401);
        expect(((await res.json()) as { error: { code: string } }).error.code, wrong).toBe("api_key_invalid");
      }
    } finally {
      await own.stop();
    }
    // the comparison itself (constant-time after a length check; node:crypto timingSafeEqual)
    expect(sameKey("sk_test_a", "sk_test_a")).toBe(true);
    expect(sameKey("sk_test_a", "sk_test_b")).toBe(false);
    expect(sameKey("sk_test_a", "sk_test_ab")).toBe(false);
    expect(sameKey("", "sk_test_a")).toBe(false);
  });

  it("answers a request without a key with 401 (StripeAuthenticationError)", async () => {
    const res = await fetch(`${fakes.stripe.url}/v1/customers/cus_x`);
    expect(res.status).toBe(401);
    const body = (await res.json()) as { error: { type: string } };
    expect(body.error.type).toBe("invalid_request_error");
  });

  it("keeps its state in a JSON file across a restart", async () => {
    const dir = mkdtempSync(join(tmpdir(), "fake-stripe-"));
    try {
      const stateFile = join(dir, "state.json");
      const first = await startFakeStripe({ webhookSecret: "whsec_x", stateFile });
      const c1 = createStripeClient({ secretKey: TEST_STRIPE_KEY, apiBase: first.url, maxNetworkRetries: 0 });
      const customer = await c1.customers.create({ email: "persist@burnline.test" });
      await first.close();
      const second = await startFakeStripe({ webhookSecret: "whsec_x", stateFile });
      const c2 = createStripeClient({ secretKey: TEST_STRIPE_KEY, apiBase: second.url, maxNetworkRetries: 0 });
      expect((await c2.customers.retrieve(customer.id)) as Stripe.Customer).toMatchObject({
        email: "persist@burnline.test",
      });
      await second.close();
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
