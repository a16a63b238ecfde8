/**
 * The money and the queue on two app nodes sharing a real libSQL server and a real Redis.
 *
 * - Stripe's webhook documentation ("Handle duplicate events") says an event may arrive more than
 *   once; here the same signed event (signed with the SDK's own generateTestHeaderString) reaches
 *   both nodes at the same moment and must be applied once: one authorisation in the ledger, the
 *   ledger's own rule (authorised = captured + released + held) holding, and the hold our ledger
 *   counts equal to what the Stripe fake shows as `requires_capture` (Stripe API reference,
 *   PaymentIntent.status).
 * - Two experts claiming the same case on different nodes at once: one wins, the other gets 409.
 * - A timed move due once (an answered case nobody confirmed, past the closing delay) is made
 *   once although both nodes run the sweeps every second: one history entry, one notice per
 *   person; and the sweep's schedule runs once per period on the shared queue, not once per node.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import Stripe from "stripe";
import request from "supertest";
import { and, eq } from "drizzle-orm";
import { Queue } from "bullmq";
import { Redis } from "ioredis";
import { schema } from "../../server/db/client";
import { ledgerBalance } from "../../server/payments/ledger";
import { QUEUE_PREFIX, SWEEP_QUEUE } from "../../server/services/background";
import { createExpert, createShopTeam, signIn } from "../factories/index";
import { CARDS, insertDraftCase, sessionIdOf } from "../helpers/queue-flow";
import type { TestServer } from "../helpers/test-app";
import { nodesMissing, startNodes, WEBHOOK_SECRET, type NodeRig } from "../helpers/nodes";

const missing = nodesMissing();
if (missing) console.warn(`several-node tests skipped: missing ${missing}`);

const SWEEP_MS = 1000;
let rig: NodeRig;

beforeAll(async () => {
  if (missing) return;
  rig = await startNodes(2, { QUEUE_SWEEP_MS: String(SWEEP_MS) });
}, 120_000);
afterAll(async () => rig?.close(), 60_000);

/** The shape the queue-flow helpers take (they use ctx.db and ctx.now only). */
const asServer = () => ({ ctx: rig.ctx }) as unknown as TestServer;

/** A submitted case whose checkout is paid at the fake, its webhooks held back. */
async function paidCase() {
  const t = await createShopTeam(rig.ctx, { technicians: 1 });
  const tech = await signIn(rig.nodes[0], t.technicians[0]);
  const caseId = await insertDraftCase(asServer(), { shopId: t.shop.id, createdBy: t.technicians[0].id });
  const res = await tech.post(`/api/cases/${caseId}/submit`).set("Origin", rig.front).send({ tier: "standard" });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  const sessionId = sessionIdOf(res.body.checkoutUrl);
  rig.fakes.stripe.holdDeliveries();
  expect(rig.fakes.stripe.pay(sessionId, CARDS.ok).ok).toBe(true);
  return { t, caseId, sessionId };
}

function postEvent(nodeUrl: string, event: unknown) {
  const payload = JSON.stringify(event);
  const signature = Stripe.webhooks.generateTestHeaderString({ payload, secret: WEBHOOK_SECRET });
  return request(nodeUrl)
    .post("/api/webhooks/stripe")
    .set("Content-Type", "application/json")
    .set("Stripe-Signature", signature)
    .send(payload);
}

describe.skipIf(!!missing)("payments and the queue on two nodes", () => {
  it("the same signed webhook sent to both nodes at once is applied once, and the ledger balances", async () => {
    const { caseId, sessionId } = await paidCase();
    const events = rig.fakes.stripe.events().filter((e) => {
      const o = e.data.object as { id: string; payment_intent?: string | null };
      const pi = rig.fakes.stripe.state.checkoutSessions[sessionId].payment_intent;
      return o.id === sessionId || (pi && (o.id === pi || o.payment_intent === pi));
    });
    expect(events.length).toBeGreaterThan(0);
    for (const ev of events) {
      const [a, b] = await Promise.all([postEvent(rig.nodes[0].url, ev), postEvent(rig.nodes[1].url, ev)]);
      expect([a.status, b.status]).toEqual([200, 200]);
      expect([a.body.outcome, b.body.outcome].sort()).toContain("duplicate");
    }
    // the fake's own deliveries (held until now) are duplicates too
    rig.fakes.stripe.releaseDeliveries();
    await rig.fakes.stripe.idle();

    const { c, history, entries, stored, balance, payments } = await rig.db.read(async (tx) => ({
      c: await tx.select().from(schema.caseTable).where(eq(schema.caseTable.id, caseId)).get(),
      history: await tx.select().from(schema.caseEvent).where(eq(schema.caseEvent.caseId, caseId)).all(),
      entries: await tx.select().from(schema.ledgerEntry).where(eq(schema.ledgerEntry.caseId, caseId)).all(),
      stored: await tx.select().from(schema.stripeEvent).all(),
      balance: await ledgerBalance(tx, caseId),
      payments: await tx.select().from(schema.payment).where(eq(schema.payment.caseId, caseId)).all(),
    }));
    expect(c?.status).toBe("queued");
    expect(history.filter((e) => e.type === "payment_authorized")).toHaveLength(1);
    expect(entries.filter((e) => e.kind === "authorization")).toHaveLength(1);
    for (const ev of events) expect(stored.filter((s) => s.id === ev.id)).toHaveLength(1);
    expect(balance.problems).toEqual([]);
    expect(balance.authorizedCents).toBe(balance.capturedCents + balance.releasedCents + balance.heldCents);
    const pi = rig.fakes.stripe.state.paymentIntents[payments[0].paymentIntentId!];
    expect(pi.status).toBe("requires_capture");
    expect(balance.heldCents).toBe(pi.amount_capturable);
  });

  it("two experts claiming one case on different nodes at once: one wins, the other gets 409", async () => {
    const [e1, e2] = [
      await createExpert(rig.ctx, { systems: ["ignition"] }),
      await createExpert(rig.ctx, { systems: ["ignition"] }),
    ];
    const { caseId } = await paidCase();
    rig.fakes.stripe.releaseDeliveries();
    await rig.fakes.stripe.idle();
    const [a1, a2] = [await signIn(rig.nodes[0], e1), await signIn(rig.nodes[1], e2)];
    const [r1, r2] = await Promise.all([
      a1.post(`/api/cases/${caseId}/claim`).set("Origin", rig.front),
      a2.post(`/api/cases/${caseId}/claim`).set("Origin", rig.front),
    ]);
    expect([r1.status, r2.status].sort()).toEqual([200, 409]);
    const winner = r1.status === 200 ? e1.id : e2.id;
    const { c, claims } = await rig.db.read(async (tx) => ({
      c: await tx.select().from(schema.caseTable).where(eq(schema.caseTable.id, caseId)).get(),
      claims: await tx
        .select()
        .from(schema.caseEvent)
        .where(and(eq(schema.caseEvent.caseId, caseId), eq(schema.caseEvent.type, "claimed")))
        .all(),
    }));
    expect(c?.status).toBe("claimed");
    expect(c?.expertId).toBe(winner);
    expect(claims).toHaveLength(1);
  });

  it("a sweep due once runs once, though both nodes run the sweeps; the schedule runs once per period", async () => {
    const t = await createShopTeam(rig.ctx, { technicians: 1 });
    const e = await createExpert(rig.ctx, { systems: ["ignition"] });
    const caseId = await insertDraftCase(asServer(), { shopId: t.shop.id, createdBy: t.technicians[0].id });
    const longAgo = new Date(Date.now() - 60 * 86_400_000); // far past the closing delay (days, docs/api.md)
    await rig.db.write(async (tx) => {
      await tx
        .update(schema.caseTable)
        .set({ status: "answered", expertId: e.id, claimedAt: longAgo })
        .where(eq(schema.caseTable.id, caseId))
        .run();
      await tx
        .insert(schema.caseQueueState)
        .values({ caseId, answeredAt: longAgo, updatedAt: longAgo })
        .onConflictDoUpdate({ target: schema.caseQueueState.caseId, set: { answeredAt: longAgo } })
        .run();
    });
    const redis = new Redis(rig.redis.url, { maxRetriesPerRequest: null });
    const queue = new Queue(SWEEP_QUEUE, { connection: redis, prefix: QUEUE_PREFIX });
    try {
      const runsBefore = (await queue.getJobs(["completed"])).filter((j) => j.name === "queue").length;
      const started = Date.now();
      const closed = async () =>
        (await rig.db.read((tx) => tx.select().from(schema.caseTable).where(eq(schema.caseTable.id, caseId)).get()))
          ?.status === "closed";
      for (let i = 0; i < 100 && !(await closed()); i++) await new Promise((r) => setTimeout(r, 100));
      expect(await closed()).toBe(true);
      // let several more periods pass: nothing happens to the case again
      await new Promise((r) => setTimeout(r, 5 * SWEEP_MS));
      const elapsed = Date.now() - started;
      const { history, notes } = await rig.db.read(async (tx) => ({
        history: await tx.select().from(schema.caseEvent).where(eq(schema.caseEvent.caseId, caseId)).all(),
        notes: await tx.select().from(schema.notification).where(eq(schema.notification.caseId, caseId)).all(),
      }));
      expect(history.filter((h) => h.type === "closed_unconfirmed")).toHaveLength(1);
      const perUser = new Map<string, number>();
      for (const n of notes) perUser.set(n.userId, (perUser.get(n.userId) ?? 0) + 1);
      expect(perUser.get(e.id)).toBe(1);
      expect(perUser.get(t.technicians[0].id)).toBe(1);
      // the queue sweep's scheduled runs: one job per period (ids repeat:<scheduler>:<slot>), not one per node
      const runs = (await queue.getJobs(["completed"])).filter((j) => j.name === "queue");
      const newRuns = runs.length - runsBefore;
      expect(new Set(runs.map((j) => j.id)).size).toBe(runs.length);
      expect(newRuns).toBeGreaterThan(0);
      expect(newRuns).toBeLessThanOrEqual(Math.ceil(elapsed / SWEEP_MS) + 1);
    } finally {
      await queue.close();
      redis.disconnect();
    }
  }, 60_000);
});
