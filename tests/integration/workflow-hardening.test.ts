/**
 * Issue 12, money and input (items 4, 5, 6, 7 and 12), against a real listening server.
 *
 * External references for the expected values:
 * - Stripe API reference, PaymentIntents: a cancelled intent is "canceled" with amount_received 0; a
 *   captured one is "succeeded" with amount_received = the captured amount; cancelling a succeeded
 *   intent is refused (docs.stripe.com/api/payment_intents/cancel: "You cannot cancel this
 *   PaymentIntent because it has a status of succeeded").
 * - Stripe API reference, Refunds: a full refund sets the charge's amount_refunded to the amount
 *   captured (docs.stripe.com/api/refunds/create).
 * - Stripe API reference, Checkout Sessions: status "open" | "complete" | "expired"; an expired
 *   session can no longer be paid (docs.stripe.com/api/checkout/sessions/expire).
 * - Stripe docs, "Receive Stripe events in your webhook endpoint": return a 2xx status quickly; events
 *   answered otherwise are retried for up to three days.
 * - RFC 9110 §15.5.16 (415 Unsupported Media Type): the server refuses a request because the content
 *   is in a format not supported by the target resource for that method.
 */
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import Stripe from "stripe";
import request from "supertest";
import { count, eq } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import {
  createAdmin,
  createExpert,
  createShopTeam,
  signIn,
  type CreatedExpert,
  type SignedInAgent,
} from "../factories";
import {
  caseRow,
  expectLedgerBalanced,
  fakeIntent,
  insertDraftCase,
  paymentsOf,
  sessionIdOf,
  submitAndPay,
} from "../helpers/queue-flow";
import { schema } from "../../server/db/client";

let server: TestServer;
let expert: CreatedExpert;
let admin: SignedInAgent;
const SECRET = "whsec_burnline_hardening";

const ANSWER = {
  diagnosis: "Open secondary on coil 2.",
  rootCause: "Coil 2 winding open.",
  recommendedFix: "Replace coil 2.",
  testsToConfirm: "Recapture secondary on 2.",
};

beforeAll(async () => {
  server = await startTestServer({ STRIPE_WEBHOOK_SECRET: SECRET });
  expert = await createExpert(server, { systems: ["ignition"], maxOpenCases: 100 });
  admin = await signIn(server, await createAdmin(server));
});
afterAll(async () => server?.close());
afterEach(async () => {
  await server.fakeStripe!.idle();
  await expectLedgerBalanced(server, "all");
});

async function team() {
  const t = await createShopTeam(server, { technicians: 1 });
  return { ...t, tech: await signIn(server, t.technicians[0]), ownerAgent: await signIn(server, t.owner) };
}

const GAPS_MS = [0, 3, 6, 9, 12, 18, 25];

describe("item 4: a refund racing the expert's answer", () => {
  it("either gives the money back (release before capture, refund after) or answers 409 — never 200 with nothing refunded", async () => {
    const e = await signIn(server, expert);
    const outcomes: string[] = [];
    for (let i = 0; i < 7; i++) {
      const t = await team();
      const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
      const { paymentIntentId } = await submitAndPay(server, t.tech, caseId);
      expect((await e.post(`/api/cases/${caseId}/claim`)).status).toBe(200);

      // the refund leaves a little after the answer, by a different gap each try, so that some tries
      // land while the answer's capture is on its way to the payment service
      const answering = e
        .post(`/api/cases/${caseId}/answer`)
        .send(ANSWER)
        .then((r) => r);
      await new Promise((r) => setTimeout(r, GAPS_MS[i]));
      const [refund, answer] = await Promise.all([
        admin.post(`/api/admin/cases/${caseId}/refund`).send({ reason: "Race" }),
        answering,
      ]);
      await server.fakeStripe!.idle();
      const pi = fakeIntent(server, paymentIntentId!);
      const charge = pi.latest_charge ? server.fakeStripe!.state.charges[pi.latest_charge] : null;
      // what the customer has really paid in the end, by the payment service's own record (a cancelled
      // authorisation also counts as refunded on its charge, with nothing received)
      const kept = Math.max(0, pi.amount_received - (charge?.amount_refunded ?? 0));
      expect([200, 409], JSON.stringify(refund.body)).toContain(refund.status);
      expect([201, 409], JSON.stringify(answer.body)).toContain(answer.status);
      if (refund.status === 200) {
        expect(kept, `try ${i}: refund said 200 but ${kept} cents stay charged (${pi.status})`).toBe(0);
        expect(["released", "refunded"]).toContain(refund.body.payment.status);
      } else {
        // a 409 says why, and the desk is not told anything was given back
        expect(refund.body.error.code).toMatch(/^[a-z_]+$/);
        expect(refund.body.error.message.length).toBeGreaterThan(10);
      }
      outcomes.push(`${refund.status}/${answer.status}/${pi.status}`);
      await expectLedgerBalanced(server, caseId);
    }
    expect(outcomes).toHaveLength(7);
  });
});

describe("item 5: one open checkout per case", () => {
  it("three simultaneous submits: the same session or 409, and at most one session can be paid", async () => {
    const t = await team();
    const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
    const results = await Promise.all(
      [1, 2, 3].map(() => t.tech.post(`/api/cases/${caseId}/submit`).send({ tier: "standard" })),
    );
    for (const r of results) expect([201, 409], JSON.stringify(r.body)).toContain(r.status);
    const created = results.filter((r) => r.status === 201);
    expect(created.length).toBeGreaterThanOrEqual(1);
    await server.fakeStripe!.idle();
    const sessions = Object.values(server.fakeStripe!.state.checkoutSessions).filter(
      (s) => s.client_reference_id === caseId,
    );
    expect(
      sessions.filter((s) => s.status === "open"),
      "open sessions at the payment service",
    ).toHaveLength(1);
    // every session handed out that is not the open one was expired at the payment service
    const open = sessions.find((s) => s.status === "open")!;
    for (const r of created) {
      const id = sessionIdOf(r.body.checkoutUrl);
      if (id !== open.id) expect(server.fakeStripe!.state.checkoutSessions[id].status).toBe("expired");
    }
    // paying every handed-out session: one authorisation at most
    const paid = [...new Set(created.map((r) => sessionIdOf(r.body.checkoutUrl)))].map((id) =>
      server.fakeStripe!.pay(id, "4242424242424242"),
    );
    expect(paid.filter((p) => p.ok)).toHaveLength(1);
    await server.fakeStripe!.idle();
    expect((await caseRow(server, caseId)).status).toBe("queued");
    expect((await paymentsOf(server, caseId)).filter((p) => p.status === "authorized")).toHaveLength(1);
  });

  it("a later submit replaces the open checkout and expires it at the payment service", async () => {
    const t = await team();
    const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
    const first = await t.tech.post(`/api/cases/${caseId}/submit`).send({ tier: "standard" });
    expect(first.status).toBe(201);
    const second = await t.tech.post(`/api/cases/${caseId}/submit`).send({ tier: "priority" });
    expect(second.status).toBe(201);
    expect(server.fakeStripe!.state.checkoutSessions[sessionIdOf(first.body.checkoutUrl)].status).toBe("expired");
    expect(server.fakeStripe!.state.checkoutSessions[sessionIdOf(second.body.checkoutUrl)].status).toBe("open");
    expect(server.fakeStripe!.pay(sessionIdOf(first.body.checkoutUrl), "4242424242424242").ok).toBe(false);
  });
});

describe("item 6: a case's payment is the shop's and the desk's business", () => {
  it("experts get no payment details and cannot make the server call the payment service", async () => {
    const t = await team();
    const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
    await submitAndPay(server, t.tech, caseId);
    const other = await team();
    const approved = await signIn(server, await createExpert(server, { systems: ["ignition"] }));
    // the approved expert may look at the queued case itself …
    expect((await approved.get(`/api/cases/${caseId}`)).status).toBe(200);
    // … but not at its payment, with or without ?sync=1
    for (const path of [`/api/cases/${caseId}/payment`, `/api/cases/${caseId}/payment?sync=1`]) {
      const r = await approved.get(path);
      expect(r.status, path).toBe(403);
      expect(r.body.payment, path).toBeUndefined();
      expect(JSON.stringify(r.body)).not.toContain("4242");
    }
    // after claiming it, still not
    const e = await signIn(server, expert);
    expect((await e.post(`/api/cases/${caseId}/claim`)).status).toBe(200);
    expect((await e.get(`/api/cases/${caseId}/payment`)).status).toBe(403);
    // another shop: as if the case did not exist
    expect((await other.tech.get(`/api/cases/${caseId}/payment`)).status).toBe(404);
    // the shop's technician and owner, and the desk's admin, see it
    for (const a of [t.tech, t.ownerAgent, admin]) {
      const r = await a.get(`/api/cases/${caseId}/payment`);
      expect(r.status).toBe(200);
      expect(r.body.payment).toMatchObject({ status: "authorized", cardLast4: "4242" });
    }
    expect((await e.post(`/api/cases/${caseId}/release`)).status).toBe(200);
  });
});

describe("item 7: a webhook about a payment that is not ours", () => {
  const header = (payload: string) =>
    Stripe.webhooks.generateTestHeaderString({ payload, secret: SECRET, timestamp: Math.floor(Date.now() / 1000) });
  const post = (payload: string) =>
    request(server.url)
      .post("/api/webhooks/stripe")
      .set("Content-Type", "application/json")
      .set("Stripe-Signature", header(payload))
      .send(payload);
  const event = (type: string, object: Record<string, unknown>) =>
    JSON.stringify({
      id: `evt_${crypto.randomUUID().replace(/-/g, "")}`,
      object: "event",
      type,
      created: Math.floor(Date.now() / 1000),
      data: { object },
    });

  it("is acknowledged with 2xx and stored as ignored, not answered 500", async () => {
    const payloads = [
      event("payment_intent.succeeded", { id: "pi_notours0000000000000001", object: "payment_intent", metadata: {} }),
      event("payment_intent.amount_capturable_updated", {
        id: "pi_notours0000000000000002",
        object: "payment_intent",
        metadata: { paymentId: crypto.randomUUID() },
      }),
      event("charge.refunded", {
        id: "ch_notours0000000000000003",
        object: "charge",
        payment_intent: "pi_notours0000000000000003",
      }),
      event("checkout.session.completed", {
        id: "cs_notours0000000000000004",
        object: "checkout.session",
        payment_intent: null,
        metadata: {},
      }),
    ];
    for (const p of payloads) {
      const r = await post(p);
      expect(r.status, `${JSON.parse(p).type}: ${JSON.stringify(r.body)}`).toBeGreaterThanOrEqual(200);
      expect(r.status).toBeLessThan(300);
      expect(r.body).toMatchObject({ received: true, outcome: "ignored" });
      const stored = await server.ctx.db.read((tx) =>
        tx
          .select()
          .from(schema.stripeEvent)
          .where(eq(schema.stripeEvent.id, JSON.parse(p).id))
          .get(),
      );
      expect(stored?.outcome).toBe("ignored");
    }
  });
});

describe("item 12: bodies that are not the type the route takes", () => {
  const caseCount = async () =>
    (await server.ctx.db.read((tx) => tx.select({ n: count() }).from(schema.caseTable).get()))!.n;

  it("a form-encoded POST /api/cases answers 415 and creates nothing", async () => {
    const t = await team();
    const before = await caseCount();
    const r = await t.tech
      .post("/api/cases")
      .set("Content-Type", "application/x-www-form-urlencoded")
      .send("complaint=misfire&system=ignition");
    expect(r.status).toBe(415);
    expect(r.body.error.code).toBe("unsupported_type");
    const plain = await t.tech.post("/api/cases").set("Content-Type", "text/plain").send('{"complaint":"misfire"}');
    expect(plain.status).toBe(415);
    expect(await caseCount()).toBe(before);
    // positive control: the same request as JSON creates the draft
    const ok = await t.tech.post("/api/cases").send({ complaint: "misfire" });
    expect(ok.status).toBe(201);
    expect(await caseCount()).toBe(before + 1);
  });

  it("a form-encoded withdraw answers 415 and leaves the case as it was", async () => {
    const t = await team();
    const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
    const r = await t.tech
      .post(`/api/cases/${caseId}/withdraw`)
      .set("Content-Type", "application/x-www-form-urlencoded")
      .send("confirm=1");
    expect(r.status).toBe(415);
    expect((await caseRow(server, caseId)).status).toBe("draft");
    const multipart = await t.tech.post(`/api/cases/${caseId}/withdraw`).field("confirm", "1");
    expect(multipart.status).toBe(415);
    expect((await caseRow(server, caseId)).status).toBe("draft");
    // positive control: a withdraw with no body at all goes through
    const ok = await t.tech.post(`/api/cases/${caseId}/withdraw`);
    expect(ok.status).toBe(200);
    expect((await caseRow(server, caseId)).status).toBe("withdrawn");
  });

  it("PATCH, PUT and admin routes refuse other types too; multipart uploads keep multipart", async () => {
    const t = await team();
    const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
    const patch = await t.tech
      .patch(`/api/cases/${caseId}`)
      .set("Content-Type", "application/x-www-form-urlencoded")
      .send("complaint=changed");
    expect(patch.status).toBe(415);
    expect((await caseRow(server, caseId)).complaint).not.toBe("changed");
    const put = await (
      await signIn(server, expert)
    )
      .put("/api/queue/availability")
      .set("Content-Type", "text/plain")
      .send("available=true");
    expect(put.status).toBe(415);
    const pricing = await admin
      .put("/api/admin/pricing")
      .set("Content-Type", "application/x-www-form-urlencoded")
      .send("deskShareBasisPoints=0");
    expect(pricing.status).toBe(415);
    const csv =
      "Time (ms),A (V)\n" +
      Array.from({ length: 200 }, (_, i) => `${(i * 0.01).toFixed(2)},${i === 50 ? 8 : 0.2}`).join("\n") +
      "\n";
    const up = await t.tech
      .post(`/api/cases/${caseId}/traces`)
      .field("settings", JSON.stringify({ kind: "generic", probe: "direct", voltsPerDiv: 2, timePerDivS: 0.0005 }))
      .attach("file", Buffer.from(csv), "coil1.csv");
    expect(up.status, JSON.stringify(up.body)).toBe(201);
  });
});
