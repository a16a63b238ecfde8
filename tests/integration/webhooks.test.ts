/**
 * POST /api/webhooks/stripe: signature verification and exactly-once application in any order.
 *
 * External references:
 * - Stripe docs, "Verify webhook signatures" / "Check the webhook signatures manually": the header is
 *   `t=<unix seconds>,v1=<HMAC-SHA256 of "<t>.<raw body>">`, the default tolerance is 300 s (five
 *   minutes). Test headers are made with the SDK's own `stripe.webhooks.generateTestHeaderString`.
 * - Stripe docs, "Handle duplicate events" and "Event ordering": Stripe may deliver an event more
 *   than once and does not guarantee order, so the receiver must be idempotent and order-independent.
 * - The SDK only checks that a timestamp is not too old; refusing one 600 s in the future is this
 *   product's rule (issue #5), verified here.
 */
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import Stripe from "stripe";
import { eq, sql } from "drizzle-orm";
import request from "supertest";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createExpert, createShopTeam, signIn } from "../factories";
import {
  CARDS,
  caseRow,
  expectLedgerBalanced,
  flushMail,
  insertDraftCase,
  mailsTo,
  paymentsOf,
  sessionIdOf,
} from "../helpers/queue-flow";
import { schema } from "../../server/db/client";

let server: TestServer;
const SECRET = "whsec_burnline_local";

beforeAll(async () => {
  server = await startTestServer({ STRIPE_WEBHOOK_SECRET: SECRET });
  await createExpert(server, { systems: ["ignition"] });
});
afterAll(async () => server?.close());
afterEach(async () => {
  server.fakeStripe!.releaseDeliveries();
  await server.fakeStripe!.idle();
  await expectLedgerBalanced(server, "all");
});

async function newCase() {
  const t = await createShopTeam(server, { technicians: 1 });
  const tech = await signIn(server, t.technicians[0]);
  const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
  const res = await tech.post(`/api/cases/${caseId}/submit`).send({ tier: "standard" });
  expect(res.status).toBe(201);
  return { t, tech, caseId, sessionId: sessionIdOf(res.body.checkoutUrl) };
}

function pay(sessionId: string, card: string) {
  return server.fakeStripe!.pay(sessionId, card);
}

const eventsFor = (sessionOrIntent: string, type?: string) =>
  server.fakeStripe!.events(type).filter((e) => {
    const o = e.data.object as { id: string; payment_intent?: string | null };
    return o.id === sessionOrIntent || o.payment_intent === sessionOrIntent;
  });

function post(payload: string, signature?: string) {
  const r = request(server.url).post("/api/webhooks/stripe").set("Content-Type", "application/json");
  if (signature !== undefined) r.set("Stripe-Signature", signature);
  return r.send(payload);
}

const header = (payload: string, opts: { secret?: string; timestamp?: number } = {}) =>
  Stripe.webhooks.generateTestHeaderString({
    payload,
    secret: opts.secret ?? SECRET,
    timestamp: opts.timestamp ?? Math.floor(Date.now() / 1000),
  });

const eventCount = async () =>
  Number(
    (await server.ctx.db.read((tx) =>
      tx
        .select({ n: sql<number>`count(*)` })
        .from(schema.stripeEvent)
        .get(),
    ))!.n,
  );

describe("signature verification", () => {
  it("refuses a wrong secret, one changed byte, a timestamp 301 s old and one 600 s ahead with 400, and applies nothing", async () => {
    const { caseId, sessionId } = await newCase();
    server.fakeStripe!.holdDeliveries();
    expect(pay(sessionId, CARDS.ok).ok).toBe(true);
    const completed = server
      .fakeStripe!.events("checkout.session.completed")
      .find((e) => (e.data.object as { id: string }).id === sessionId)!;
    const payload = JSON.stringify(completed, null, 2);
    const now = Math.floor(Date.now() / 1000);
    const before = await eventCount();

    const wrongSecret = await post(payload, header(payload, { secret: "whsec_not_the_right_one" }));
    expect(wrongSecret.status).toBe(400);
    expect(wrongSecret.body.error.code).toBe("signature_invalid");

    // one byte of the body changed after signing ("requires_capture"-free field: the id's last character)
    const sig = header(payload);
    const i = payload.indexOf(completed.id) + completed.id.length - 1;
    const tampered = payload.slice(0, i) + (payload[i] === "A" ? "B" : "A") + payload.slice(i + 1);
    expect(tampered.length).toBe(payload.length);
    const changed = await post(tampered, sig);
    expect(changed.status).toBe(400);
    expect(changed.body.error.code).toBe("signature_invalid");

    const old = await post(payload, header(payload, { timestamp: now - 301 }));
    expect(old.status).toBe(400);
    expect(old.body.error.code).toBe("timestamp_too_old");

    const future = await post(payload, header(payload, { timestamp: now + 600 }));
    expect(future.status).toBe(400);
    expect(future.body.error.code).toBe("timestamp_in_future");

    const missing = await post(payload);
    expect(missing.status).toBe(400);
    expect(missing.body.error.code).toBe("signature_missing");

    // every refusal has the product's error shape
    for (const r of [wrongSecret, changed, old, future, missing])
      expect(Object.keys(r.body.error).sort()).toEqual(["code", "message"]);
    expect(await eventCount()).toBe(before);
    expect((await caseRow(server, caseId)).status).toBe("awaiting_payment");

    // positive control: the same payload, correctly signed 299 s ago (inside the tolerance), applies
    const ok = await post(payload, header(payload, { timestamp: now - 299 }));
    expect(ok.status).toBe(200);
    expect(ok.body).toMatchObject({ received: true, id: completed.id, outcome: "applied" });
    expect((await caseRow(server, caseId)).status).toBe("queued");
  });

  it("a webhook needs no Origin check and no session (signed by the sender)", async () => {
    const payload = JSON.stringify({
      id: "evt_unrelated_1",
      object: "event",
      type: "customer.updated",
      data: { object: { id: "cus_x", object: "customer" } },
    });
    const res = await request(server.url)
      .post("/api/webhooks/stripe")
      .set("Origin", "https://elsewhere.example")
      .set("Stripe-Signature", header(payload))
      .set("Content-Type", "application/json")
      .send(payload);
    expect(res.status).toBe(200);
    expect(res.body.outcome).toBe("ignored");
  });
});

describe("exactly once, any order", () => {
  it("the same event delivered twice, and three times at once, applies once", async () => {
    const { t, caseId, sessionId } = await newCase();
    server.fakeStripe!.holdDeliveries();
    expect(pay(sessionId, CARDS.ok).ok).toBe(true);
    const completed = server
      .fakeStripe!.events("checkout.session.completed")
      .find((e) => (e.data.object as { id: string }).id === sessionId)!;

    const concurrent = await Promise.all([1, 2, 3].map(() => server.fakeStripe!.redeliver(completed.id)));
    expect(concurrent.every((d) => d.status === 200)).toBe(true);
    const outcomes = concurrent.map((d) => JSON.parse(d.responseBody!).outcome).sort();
    expect(outcomes).toEqual(["applied", "duplicate", "duplicate"]);

    const again = await server.fakeStripe!.redeliver(completed.id);
    expect(JSON.parse(again.responseBody!).outcome).toBe("duplicate");
    server.fakeStripe!.releaseDeliveries();
    await server.fakeStripe!.idle();

    expect((await caseRow(server, caseId)).status).toBe("queued");
    const hist = await server.ctx.db.read((tx) =>
      tx.select().from(schema.caseEvent).where(eq(schema.caseEvent.caseId, caseId)).all(),
    );
    expect(hist.filter((e) => e.type === "payment_authorized")).toHaveLength(1);
    const entries = await server.ctx.db.read((tx) =>
      tx.select().from(schema.ledgerEntry).where(eq(schema.ledgerEntry.caseId, caseId)).all(),
    );
    expect(entries.filter((e) => e.kind === "authorization")).toHaveLength(1);
    const offers = await server.ctx.db.read((tx) =>
      tx.select().from(schema.caseOffer).where(eq(schema.caseOffer.caseId, caseId)).all(),
    );
    expect(offers.length).toBe(new Set(offers.map((o) => o.expertId)).size);
    await flushMail(server);
    expect(mailsTo(server, t.technicians[0].email, /^Paid and queued/)).toHaveLength(1);
    expect(
      await server.ctx.db.read((tx) =>
        tx.select().from(schema.stripeEvent).where(eq(schema.stripeEvent.id, completed.id)).all(),
      ),
    ).toHaveLength(1);
  });

  it("events in reverse order (a decline, then success on the same checkout) end queued, once", async () => {
    const { t, caseId, sessionId } = await newCase();
    server.fakeStripe!.holdDeliveries();
    expect(pay(sessionId, CARDS.declined).ok).toBe(false);
    expect(pay(sessionId, CARDS.ok).ok).toBe(true);
    const pi = (await paymentsOf(server, caseId))[0];
    const piId = server.fakeStripe!.state.checkoutSessions[sessionId].payment_intent!;
    // the failure events were created before the success events
    const types = eventsFor(piId).map((e) => e.type);
    expect(types.indexOf("payment_intent.payment_failed")).toBeLessThan(
      types.indexOf("payment_intent.amount_capturable_updated"),
    );
    server.fakeStripe!.releaseDeliveries({ reverse: true });
    await server.fakeStripe!.idle();

    expect((await caseRow(server, caseId)).status).toBe("queued");
    const p = (await paymentsOf(server, caseId)).find((x) => x.id === pi.id)!;
    expect(p.status).toBe("authorized");
    expect(p.failureMessage).toBeNull();
    const wf = await (await signIn(server, t.technicians[0])).get(`/api/cases/${caseId}/workflow`);
    expect(wf.body.paymentMessage).toBeNull();
    await flushMail(server);
    expect(mailsTo(server, t.technicians[0].email, /^Paid and queued/)).toHaveLength(1);
    expect((await expectLedgerBalanced(server, caseId)).heldCents).toBe(p.amountCents);
  });

  it("events shuffled after a withdrawal do not bring the case back", async () => {
    const { tech, caseId, sessionId } = await newCase();
    server.fakeStripe!.holdDeliveries();
    expect(pay(sessionId, CARDS.ok).ok).toBe(true);
    // the authorisation reaches us, then the shop withdraws; the other events arrive afterwards
    const capturable = server.fakeStripe!.events("payment_intent.amount_capturable_updated").at(-1)!;
    expect((await server.fakeStripe!.redeliver(capturable.id)).status).toBe(200);
    expect((await caseRow(server, caseId)).status).toBe("queued");
    const w = await tech.post(`/api/cases/${caseId}/withdraw`);
    expect(w.status).toBe(200);
    server.fakeStripe!.releaseDeliveries({ reverse: true });
    await server.fakeStripe!.idle();
    expect((await caseRow(server, caseId)).status).toBe("withdrawn");
    const piId = server.fakeStripe!.state.checkoutSessions[sessionId].payment_intent!;
    expect(server.fakeStripe!.state.paymentIntents[piId].status).toBe("canceled");
    expect(await expectLedgerBalanced(server, caseId)).toMatchObject({ heldCents: 0, capturedCents: 0 });
  });

  it("a checkout paid for a case that was withdrawn meanwhile is released at once", async () => {
    const { tech, caseId, sessionId } = await newCase();
    const w = await tech.post(`/api/cases/${caseId}/withdraw`);
    expect(w.status).toBe(200);
    // the session was expired on withdrawal, so paying it is refused by Stripe's page
    expect(server.fakeStripe!.state.checkoutSessions[sessionId].status).toBe("expired");
    expect(pay(sessionId, CARDS.ok).ok).toBe(false);
    await server.fakeStripe!.idle();
    expect((await caseRow(server, caseId)).status).toBe("withdrawn");
  });

  it("two checkouts of one case both paid (the first one's webhooks late): one hold kept, the other cancelled", async () => {
    const { tech, caseId, sessionId: first } = await newCase();
    server.fakeStripe!.holdDeliveries();
    expect(pay(first, CARDS.ok).ok).toBe(true);
    // the shop, seeing no change yet, starts a new checkout and pays it too
    const again = await tech.post(`/api/cases/${caseId}/submit`).send({ tier: "standard" });
    expect(again.status).toBe(201);
    const second = sessionIdOf(again.body.checkoutUrl);
    expect(pay(second, CARDS.ok).ok).toBe(true);
    server.fakeStripe!.releaseDeliveries({ reverse: true });
    await server.fakeStripe!.idle();

    expect((await caseRow(server, caseId)).status).toBe("queued");
    const pis = [first, second].map(
      (s) => server.fakeStripe!.state.paymentIntents[server.fakeStripe!.state.checkoutSessions[s].payment_intent!],
    );
    expect(pis.map((p) => p.status)).toEqual(["canceled", "requires_capture"]);
    const b = await expectLedgerBalanced(server, caseId);
    expect(b.heldCents).toBe(pis[1].amount);
    expect(b.releasedCents).toBe(pis[0].amount);
  });
});
