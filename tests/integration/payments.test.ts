/**
 * Paying for a case through the real `stripe` SDK against the local fake: manual-capture Checkout,
 * signed webhooks, declines, idempotency keys, one customer per shop, the success URL.
 *
 * External references for the expected values:
 * - Stripe API reference, PaymentIntent object: an authorised manual-capture intent has
 *   status "requires_capture" and amount_capturable = amount (docs.stripe.com/api/payment_intents/object).
 * - Stripe docs, "Place a hold on a payment method": capture_method=manual, capture later or cancel.
 * - Stripe docs, testing: 4242 4242 4242 4242 succeeds, 4000 0000 0000 0002 is a generic decline
 *   (decline_code generic_decline), 4000 0000 0000 9995 declines with insufficient_funds.
 * - Stripe docs, idempotent requests: the same key with the same parameters replays the first
 *   result; with other parameters the API answers an idempotency_error.
 */
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import Stripe from "stripe";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createShopTeam, signIn, createExpert } from "../factories";
import {
  CARDS,
  caseRow,
  expectLedgerBalanced,
  flushMail,
  insertDraftCase,
  mailsTo,
  paymentsOf,
  sessionIdOf,
  submitAndPay,
} from "../helpers/queue-flow";
import { DEFAULT_TIERS } from "../../server/services/pricing";

let server: TestServer;

beforeAll(async () => {
  server = await startTestServer();
  // one matching expert, so the paid case has someone to be offered to
  await createExpert(server, { systems: ["ignition"], makes: [] });
});
afterAll(async () => server?.close());
afterEach(async () => {
  await expectLedgerBalanced(server, "all");
});

async function team() {
  const t = await createShopTeam(server, { technicians: 1 });
  const tech = await signIn(server, t.technicians[0]);
  return { ...t, tech };
}

describe("submit and pay", () => {
  it("pay → signed webhook → queued, with the deadline of the tier and a 'paid' mail", async () => {
    const t = await team();
    const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });

    const pricing = await t.tech.get("/api/pricing");
    expect(pricing.status).toBe(200);
    const standard = pricing.body.tiers.find((x: { id: string }) => x.id === "standard");
    // the defaults of server/services/pricing.ts (invented product figures): 24 h, 49.00
    expect(standard).toMatchObject({ priceCents: DEFAULT_TIERS[0].priceCents, deadlineMinutes: 24 * 60 });

    const before = Date.now();
    const { submit, paymentIntentId } = await submitAndPay(server, t.tech, caseId, { card: CARDS.ok });
    // the fake's hosted checkout, opened on the app's own host name (issue 13: localhost vs 127.0.0.1)
    expect(new URL(submit.checkoutUrl).port).toBe(String(server.fakeStripe!.port));
    expect(new URL(submit.checkoutUrl).hostname).toBe(new URL(server.url).hostname);
    expect(submit.amountCents).toBe(standard.priceCents);

    const c = await caseRow(server, caseId);
    expect(c.status).toBe("queued");
    // deadline = authorisation time + 24 h (the tier's window), within the test's run time
    expect(c.deadlineAt!.getTime()).toBeGreaterThanOrEqual(before + 24 * 3600_000);
    expect(c.deadlineAt!.getTime()).toBeLessThanOrEqual(Date.now() + 24 * 3600_000);

    // The webhook, not a poll, did it: a signed delivery answered 2xx.
    const deliveries = server.fakeStripe!.deliveries.filter((d) => d.eventType === "checkout.session.completed");
    expect(deliveries.length).toBeGreaterThan(0);
    expect(deliveries.every((d) => d.ok && /^t=\d+,v1=[0-9a-f]{64}$/.test(d.signature))).toBe(true);

    const pi = server.fakeStripe!.state.paymentIntents[paymentIntentId!];
    expect(pi.capture_method).toBe("manual");
    expect(pi.status).toBe("requires_capture");
    expect(pi.amount_capturable).toBe(standard.priceCents);
    expect(pi.metadata.caseId).toBe(caseId);

    const paid = await server.mailCatcher!.waitFor(
      (m) => m.to.includes(t.technicians[0].email) && /^Paid and queued/.test(m.subject),
    );
    expect(paid.text).toContain("$49.00");
    // the owner hears too
    await server.mailCatcher!.waitFor((m) => m.to.includes(t.owner.email) && /^Paid and queued/.test(m.subject));

    const hist = await t.tech.get(`/api/cases/${caseId}/history`);
    expect(hist.status).toBe(200);
    expect(hist.body.items.map((e: { type: string }) => e.type)).toEqual(
      expect.arrayContaining(["submitted", "payment_authorized"]),
    );
    const authorised = hist.body.items.find((e: { type: string }) => e.type === "payment_authorized");
    expect(authorised).toMatchObject({ fromStatus: "awaiting_payment", toStatus: "queued" });

    const payment = await t.tech.get(`/api/cases/${caseId}/payment`);
    expect(payment.body.payment).toMatchObject({
      status: "authorized",
      amountCents: standard.priceCents,
      cardLast4: "4242",
    });
    await expectLedgerBalanced(server, caseId);
    expect((await expectLedgerBalanced(server, caseId)).heldCents).toBe(standard.priceCents);
  });

  it("the success URL returns the browser to the case page", async () => {
    const t = await team();
    const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
    const res = await t.tech.post(`/api/cases/${caseId}/submit`).send({ tier: "priority" });
    expect(res.status).toBe(201);
    const session = server.fakeStripe!.state.checkoutSessions[sessionIdOf(res.body.checkoutUrl)];
    expect(session.success_url).toBe(`${server.url}/cases/${caseId}?paid=1&session_id={CHECKOUT_SESSION_ID}`);
    expect(session.cancel_url).toBe(`${server.url}/cases/${caseId}?paid=0`);
    expect(session.amount_total).toBe(DEFAULT_TIERS[1].priceCents);
    // the hosted page's form posts the card and redirects (303) to the success URL with the id filled in
    const form = new URLSearchParams({ card_number: "4242 4242 4242 4242", expiry: "12/40", cvc: "123" });
    const paid = await fetch(`${server.fakeStripe!.url}/checkout/${session.id}/pay`, {
      method: "POST",
      body: form,
      redirect: "manual",
    });
    expect(paid.status).toBe(303);
    expect(paid.headers.get("location")).toBe(`${server.url}/cases/${caseId}?paid=1&session_id=${session.id}`);
    await server.fakeStripe!.idle();
    expect((await caseRow(server, caseId)).status).toBe("queued");
    // the priority tier's deadline: 2 h
    const c = await caseRow(server, caseId);
    expect(c.deadlineAt!.getTime() - c.submittedAt!.getTime()).toBe(2 * 3600_000);
  });

  it("a declined card leaves the case awaiting payment with a clear message and no 'paid' mail", async () => {
    const t = await team();
    const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
    const { pay } = await submitAndPay(server, t.tech, caseId, { card: CARDS.declined });
    expect(pay.ok).toBe(false);
    expect((await caseRow(server, caseId)).status).toBe("awaiting_payment");

    const wf = await t.tech.get(`/api/cases/${caseId}/payment`);
    expect(wf.body.status).toBe("awaiting_payment");
    expect(wf.body.payment.status).toBe("failed");
    expect(wf.body.payment.message).toMatch(/declined/i);
    expect(wf.body.payment.message).toMatch(/Nothing was charged/);
    const workflow = await t.tech.get(`/api/cases/${caseId}/workflow`);
    expect(workflow.body.paymentMessage).toMatch(/declined by the bank/);
    expect(workflow.body.abilities.submit).toBe(true);

    await flushMail(server);
    expect(mailsTo(server, t.technicians[0].email, /Paid/i)).toEqual([]);
    expect(mailsTo(server, t.owner.email, /Paid/i)).toEqual([]);
    expect((await paymentsOf(server, caseId)).every((p) => p.status !== "authorized")).toBe(true);
    expect((await expectLedgerBalanced(server, caseId)).authorizedCents).toBe(0);

    // Insufficient funds has its own wording; then a good card on a new attempt goes through.
    const second = await submitAndPay(server, t.tech, caseId, { card: CARDS.insufficient });
    expect(second.pay.ok).toBe(false);
    const again = await t.tech.get(`/api/cases/${caseId}/payment`);
    expect(again.body.payment.message).toMatch(/insufficient funds/);
    const third = await submitAndPay(server, t.tech, caseId, { card: CARDS.ok });
    expect(third.pay.ok).toBe(true);
    expect((await caseRow(server, caseId)).status).toBe("queued");
    // the earlier attempts' sessions were expired when the new one was made (Stripe: expire a session)
    const s1 = server.fakeStripe!.state.checkoutSessions[second.sessionId];
    expect(s1.status).toBe("expired");
    expect((await expectLedgerBalanced(server, caseId)).heldCents).toBe(DEFAULT_TIERS[0].priceCents);
  });

  it("one Stripe customer per shop, created once", async () => {
    const t = await team();
    const a = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
    const b = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
    const before = Object.keys(server.fakeStripe!.state.customers).length;
    const [ra, rb] = await Promise.all([
      t.tech.post(`/api/cases/${a}/submit`).send({ tier: "standard" }),
      t.tech.post(`/api/cases/${b}/submit`).send({ tier: "standard" }),
    ]);
    expect([ra.status, rb.status]).toEqual([201, 201]);
    const customers = Object.values(server.fakeStripe!.state.customers).filter((c) => c.metadata.shopId === t.shop.id);
    expect(customers).toHaveLength(1);
    expect(Object.keys(server.fakeStripe!.state.customers).length).toBe(before + 1);
    const sa = server.fakeStripe!.state.checkoutSessions[sessionIdOf(ra.body.checkoutUrl)];
    const sb = server.fakeStripe!.state.checkoutSessions[sessionIdOf(rb.body.checkoutUrl)];
    expect(sa.customer).toBe(customers[0].id);
    expect(sb.customer).toBe(customers[0].id);
  });

  it("every create call carries our idempotency key", async () => {
    const keys = Object.values(server.fakeStripe!.state.idempotency).map((r) => `${r.method} ${r.path} ${r.key}`);
    expect(keys.some((k) => /^POST \/v1\/checkout\/sessions checkout:[0-9a-f-]{36}$/.test(k))).toBe(true);
    expect(keys.some((k) => /^POST \/v1\/customers customer:[0-9a-f-]{36}$/.test(k))).toBe(true);
  });

  it("the same idempotency key twice creates one PaymentIntent; with other parameters it is refused", async () => {
    const stripe = server.ctx.stripe;
    const key = `test-${crypto.randomUUID()}`;
    const count = () => Object.keys(server.fakeStripe!.state.paymentIntents).length;
    const before = count();
    const first = await stripe.paymentIntents.create(
      { amount: 4900, currency: "usd", capture_method: "manual" },
      { idempotencyKey: key },
    );
    const second = await stripe.paymentIntents.create(
      { amount: 4900, currency: "usd", capture_method: "manual" },
      { idempotencyKey: key },
    );
    expect(second.id).toBe(first.id);
    expect(count()).toBe(before + 1);
    const err = await stripe.paymentIntents
      .create({ amount: 5000, currency: "usd", capture_method: "manual" }, { idempotencyKey: key })
      .then(
        () => null,
        (e: unknown) => e,
      );
    expect(err).toBeInstanceOf(Stripe.errors.StripeIdempotencyError);
    expect((err as Stripe.errors.StripeError).type).toBe("StripeIdempotencyError");
    expect(count()).toBe(before + 1);
    // leave no open intent behind (the ledger check looks only at the app's payments anyway)
    await stripe.paymentIntents.cancel(first.id);
  });

  it("refuses an unknown tier, an incomplete case, another shop's case and a paid case", async () => {
    const t = await team();
    const other = await team();
    const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
    const bad = await t.tech.post(`/api/cases/${caseId}/submit`).send({ tier: "platinum" });
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe("unknown_tier");
    const foreign = await other.tech.post(`/api/cases/${caseId}/submit`).send({ tier: "standard" });
    expect(foreign.status).toBe(404);
    const incomplete = await insertDraftCase(server, {
      shopId: t.shop.id,
      createdBy: t.technicians[0].id,
      system: null,
    });
    const inc = await t.tech.post(`/api/cases/${incomplete}/submit`).send({ tier: "standard" });
    expect(inc.status).toBe(409);
    expect(inc.body.error).toMatchObject({ code: "case_incomplete", details: { missing: ["system"] } });
    expect((await caseRow(server, incomplete)).status).toBe("draft");
    await submitAndPay(server, t.tech, caseId);
    const twice = await t.tech.post(`/api/cases/${caseId}/submit`).send({ tier: "standard" });
    expect(twice.status).toBe(409);
    expect((await caseRow(server, caseId)).status).toBe("queued");
  });
});
