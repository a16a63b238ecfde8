/**
 * The queue: routing to matching experts, the queue view, atomic claims, release, more data,
 * withdrawal, widening offers, missed deadlines and invalid transitions.
 *
 * External references for the expected values:
 * - Stripe API reference, PaymentIntent cancel: a cancelled intent has status "canceled" and
 *   amount_capturable 0; nothing is received (amount_received 0) — docs.stripe.com/api/payment_intents/cancel.
 * - The rules of the product are issue #5 (the state list and the transitions it names); the
 *   expected states below follow it.
 */
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createExpert, createShopTeam, signIn, type CreatedExpert } from "../factories";
import {
  caseRow,
  expectLedgerBalanced,
  fakeIntent,
  flushMail,
  insertDraftCase,
  mailsTo,
  movableClock,
  paymentsOf,
  submitAndPay,
} from "../helpers/queue-flow";
import { schema } from "../../server/db/client";
import { runQueueSweeps, sweepDeadlines, sweepWidenOffers } from "../../server/workflow/sweeps";

let server: TestServer;
let clock: ReturnType<typeof movableClock>;

beforeAll(async () => {
  server = await startTestServer();
  clock = movableClock(server);
});
afterAll(async () => server?.close());
afterEach(async () => {
  await server.fakeStripe!.idle();
  await expectLedgerBalanced(server, "all");
});

/** Every expert is approved elsewhere in this file; park them so each test controls who is available. */
async function parkAllExperts() {
  await server.ctx.db.write((tx) => tx.update(schema.expertProfile).set({ available: false }).run());
}

async function shop() {
  const t = await createShopTeam(server, { technicians: 1 });
  return { ...t, tech: await signIn(server, t.technicians[0]) };
}

async function paidCase(opts: { system?: string; make?: string; tier?: string } = {}) {
  const t = await shop();
  const caseId = await insertDraftCase(server, {
    shopId: t.shop.id,
    createdBy: t.technicians[0].id,
    system: opts.system,
    make: opts.make,
  });
  const paid = await submitAndPay(server, t.tech, caseId, { tier: opts.tier });
  expect((await caseRow(server, caseId)).status).toBe("queued");
  return { ...t, caseId, paid };
}

const offersOf = async (caseId: string) =>
  await server.ctx.db.read((tx) => tx.select().from(schema.caseOffer).where(eq(schema.caseOffer.caseId, caseId)).all());

describe("routing", () => {
  it("offers a case to matching experts only; one without the specialty or the make is not offered it", async () => {
    await parkAllExperts();
    const match = await createExpert(server, { systems: ["ignition", "fuel"], makes: [] });
    const makeMatch = await createExpert(server, { systems: ["ignition"], makes: ["Veltra"] });
    const wrongSystem = await createExpert(server, { systems: ["fuel", "networks"], makes: [] });
    const wrongMake = await createExpert(server, { systems: ["ignition"], makes: ["Korrin"] });
    const away = await createExpert(server, { systems: ["ignition"], makes: [], available: false });
    const pending = await createExpert(server, { systems: ["ignition"], makes: [], status: "pending" });

    const { caseId } = await paidCase({ system: "ignition", make: "Veltra" });
    const offered = await offersOf(caseId);
    expect(offered.map((o) => o.expertId).sort()).toEqual([match.id, makeMatch.id].sort());
    // ranked by match: the expert naming the case's make comes before "any make"
    expect(offered.find((o) => o.expertId === makeMatch.id)!.rank).toBe(1);
    expect(offered.every((o) => o.wave === 1)).toBe(true);

    await server.mailCatcher!.waitFor((m) => m.to.includes(match.email) && /^Case offered/.test(m.subject));
    await server.mailCatcher!.waitFor((m) => m.to.includes(makeMatch.email) && /^Case offered/.test(m.subject));
    await flushMail(server);
    for (const e of [wrongSystem, wrongMake, away, pending])
      expect(mailsTo(server, e.email, /^Case offered/)).toEqual([]);

    // The queue view: offers first for the matched expert; the unmatched one sees it in the whole queue.
    const a = await signIn(server, match);
    const qa = await a.get("/api/queue");
    expect(qa.status).toBe(200);
    expect(qa.body.offers.map((i: { id: string }) => i.id)).toContain(caseId);
    expect(qa.body.queue.map((i: { id: string }) => i.id)).not.toContain(caseId);
    const b = await signIn(server, wrongSystem);
    const qb = await b.get("/api/queue");
    expect(qb.body.offers.map((i: { id: string }) => i.id)).not.toContain(caseId);
    expect(qb.body.queue.map((i: { id: string }) => i.id)).toContain(caseId);
    const item = qb.body.queue.find((i: { id: string }) => i.id === caseId);
    // the expert's share of the default price 4900 at the default desk share 2000 bp (20 %): 4900 − 980
    expect(item).toMatchObject({ system: "ignition", tier: "standard", priceCents: 4900, expertShareCents: 3920 });
    // a pending expert has no queue
    const p = await signIn(server, pending);
    expect((await p.get("/api/queue")).status).toBe(403);
    // an approved expert may read the history of a queued case (to decide whether to claim)
    expect((await b.get(`/api/cases/${caseId}/history`)).status).toBe(200);
  });

  it("ranks by load: an expert at the limit of open cases is not offered", async () => {
    await parkAllExperts();
    const busy = await createExpert(server, { systems: ["starting-charging"], maxOpenCases: 1 });
    const free = await createExpert(server, { systems: ["starting-charging"], maxOpenCases: 3 });
    const first = await paidCase({ system: "starting-charging" });
    const busyAgent = await signIn(server, busy);
    expect((await busyAgent.post(`/api/cases/${first.caseId}/claim`)).status).toBe(200);
    const second = await paidCase({ system: "starting-charging" });
    expect((await offersOf(second.caseId)).map((o) => o.expertId)).toEqual([free.id]);
    // claiming above the limit is refused with 409 and changes nothing
    const over = await busyAgent.post(`/api/cases/${second.caseId}/claim`);
    expect(over.status).toBe(409);
    expect(over.body.error.code).toBe("load_limit");
    expect((await caseRow(server, second.caseId)).status).toBe("queued");
  });

  it("widens an unclaimed offer to every available approved expert after the set time", async () => {
    await parkAllExperts();
    const specialist = await createExpert(server, { systems: ["sensors"] });
    const generalist = await createExpert(server, { systems: ["fuel"] });
    const { caseId } = await paidCase({ system: "sensors" });
    expect((await offersOf(caseId)).map((o) => o.expertId)).toEqual([specialist.id]);
    expect(await sweepWidenOffers(server.ctx)).toBe(0); // not yet: the default is 30 minutes
    clock.advance(31 * 60_000);
    await sweepWidenOffers(server.ctx);
    const after = await offersOf(caseId);
    expect(after.map((o) => o.expertId)).toContain(generalist.id);
    expect(after.find((o) => o.expertId === generalist.id)!.wave).toBe(2);
    await server.mailCatcher!.waitFor((m) => m.to.includes(generalist.email) && /^Case offered/.test(m.subject));
    // widening happens once
    const n = after.length;
    clock.advance(31 * 60_000);
    await sweepWidenOffers(server.ctx);
    expect((await offersOf(caseId)).length).toBe(n);
    await runQueueSweeps(server.ctx);
  });

  it("experts set themselves available or away", async () => {
    await parkAllExperts();
    const e = await createExpert(server, { systems: ["networks"], available: false });
    const agent = await signIn(server, e);
    const none = await paidCase({ system: "networks" });
    // nobody available and matching: widened at once to the available experts (none here)
    expect((await offersOf(none.caseId)).filter((o) => o.expertId === e.id)).toEqual([]);
    const on = await agent.put("/api/queue/availability").send({ available: true });
    expect(on.status).toBe(200);
    expect((await agent.get("/api/queue")).body.me).toMatchObject({ available: true, openCases: 0, maxOpenCases: 3 });
    const next = await paidCase({ system: "networks" });
    expect((await offersOf(next.caseId)).map((o) => o.expertId)).toEqual([e.id]);
    expect((await agent.put("/api/queue/availability").send({ available: "yes" })).status).toBe(400);
    const tech = (await shop()).tech;
    expect((await tech.put("/api/queue/availability").send({ available: true })).status).toBe(403);
  });
});

describe("claims", () => {
  let experts: CreatedExpert[];
  beforeAll(async () => {
    experts = await Promise.all([1, 2, 3, 4].map(() => createExpert(server, { systems: ["ignition"] })));
  });

  it("concurrent claims: exactly one winner, the others get 409", async () => {
    const { caseId, technicians } = await paidCase({ system: "ignition" });
    const agents = await Promise.all(experts.map((e) => signIn(server, e)));
    const results = await Promise.all(agents.map((a) => a.post(`/api/cases/${caseId}/claim`)));
    const statuses = results.map((r) => r.status).sort();
    expect(statuses).toEqual([200, 409, 409, 409]);
    const winner = results.findIndex((r) => r.status === 200);
    for (const r of results.filter((x) => x.status === 409))
      expect(r.body.error).toMatchObject({
        code: "already_claimed",
        message: "Another expert claimed this case first.",
      });
    const c = await caseRow(server, caseId);
    expect(c.status).toBe("claimed");
    expect(c.expertId).toBe(experts[winner].id);
    const claims = (
      await server.ctx.db.read((tx) =>
        tx.select().from(schema.caseEvent).where(eq(schema.caseEvent.caseId, caseId)).all(),
      )
    ).filter((e) => e.type === "claimed");
    expect(claims).toHaveLength(1);
    await server.mailCatcher!.waitFor(
      (m) => m.to.includes(technicians[0].email) && /^An expert took your case/.test(m.subject),
    );
    // the winner sees it among their own cases
    const mine = await agents[winner].get("/api/queue");
    expect(mine.body.mine.map((i: { id: string }) => i.id)).toContain(caseId);
  });

  it("release puts the case back in the queue; request-data pauses it until the shop answers", async () => {
    const { caseId, technicians, tech } = await paidCase({ system: "ignition" });
    const e = await signIn(server, experts[0]);
    const other = await signIn(server, experts[1]);
    expect((await e.post(`/api/cases/${caseId}/claim`)).status).toBe(200);
    expect((await other.post(`/api/cases/${caseId}/release`)).status).toBe(404); // not theirs to see
    const rel = await e.post(`/api/cases/${caseId}/release`);
    expect(rel.status).toBe(200);
    expect(rel.body).toMatchObject({ status: "queued", expertId: null });
    expect((await other.post(`/api/cases/${caseId}/claim`)).status).toBe(200);

    const deadline = (await caseRow(server, caseId)).deadlineAt!.getTime();
    expect((await other.post(`/api/cases/${caseId}/request-data`).send({ message: "" })).status).toBe(400);
    const ask = await other
      .post(`/api/cases/${caseId}/request-data`)
      .send({ message: "Please capture secondary on cylinder 3 at 2500 rpm." });
    expect(ask.status).toBe(200);
    expect(ask.body.status).toBe("needs_data");
    const mail = await server.mailCatcher!.waitFor(
      (m) => m.to.includes(technicians[0].email) && /^More data requested/.test(m.subject),
    );
    expect(mail.text).toContain("cylinder 3 at 2500 rpm");
    const wf = await tech.get(`/api/cases/${caseId}/workflow`);
    expect(wf.body.needsDataMessage).toContain("cylinder 3");
    expect(wf.body.abilities.dataSent).toBe(true);

    // a missed-deadline sweep does not touch a case waiting for data
    clock.advance(60 * 60_000);
    await sweepDeadlines(server.ctx);
    expect((await caseRow(server, caseId)).status).toBe("needs_data");
    const sent = await tech.post(`/api/cases/${caseId}/data-sent`).send({ note: "Uploaded two captures." });
    expect(sent.status).toBe(200);
    expect(sent.body.status).toBe("claimed");
    // the deadline moved on by the hour spent waiting
    expect((await caseRow(server, caseId)).deadlineAt!.getTime() - deadline).toBeGreaterThanOrEqual(60 * 60_000);
    await server.mailCatcher!.waitFor(
      (m) => m.to.includes(experts[1].email) && /^The shop answered your request/.test(m.subject),
    );
  });

  it("a new trace uploaded while waiting for data moves the case back to the expert", async () => {
    const { caseId, technicians } = await paidCase({ system: "ignition" });
    const e = await signIn(server, experts[2]);
    expect((await e.post(`/api/cases/${caseId}/claim`)).status).toBe(200);
    expect(
      (await e.post(`/api/cases/${caseId}/request-data`).send({ message: "A photo of the coil connector, please." }))
        .status,
    ).toBe(200);
    clock.advance(5 * 60_000);
    await server.ctx.db.write((tx) =>
      tx
        .insert(schema.photo)
        .values({
          id: crypto.randomUUID(),
          caseId,
          uploadedBy: technicians[0].id,
          name: "connector.jpg",
          mime: "image/jpeg",
          bytes: 1000,
          sha256: "0".repeat(64),
          path: "photos/x.jpg",
          createdAt: server.ctx.now(),
        })
        .run(),
    );
    await runQueueSweeps(server.ctx);
    expect((await caseRow(server, caseId)).status).toBe("claimed");
    const types = (
      await server.ctx.db.read((tx) =>
        tx.select().from(schema.caseEvent).where(eq(schema.caseEvent.caseId, caseId)).all(),
      )
    ).map((x) => x.type);
    expect(types).toContain("data_uploaded");
    // hand it back so the later tests' experts are not at their limit
    expect((await e.post(`/api/cases/${caseId}/release`)).status).toBe(200);
  });
});

describe("withdraw, deadlines, invalid moves", () => {
  it("withdraw before claim cancels the hold; after a claim it is refused with 409", async () => {
    await parkAllExperts();
    const expert = await createExpert(server, { systems: ["fuel"] });
    const { caseId, tech, paid } = await paidCase({ system: "fuel" });
    expect(fakeIntent(server, paid.paymentIntentId!).status).toBe("requires_capture");
    const w = await tech.post(`/api/cases/${caseId}/withdraw`);
    expect(w.status).toBe(200);
    expect(w.body).toMatchObject({ status: "withdrawn", payment: { status: "released" } });
    const pi = fakeIntent(server, paid.paymentIntentId!);
    expect(pi.status).toBe("canceled");
    expect(pi.amount_received).toBe(0);
    expect(await expectLedgerBalanced(server, caseId)).toMatchObject({
      heldCents: 0,
      capturedCents: 0,
      releasedCents: pi.amount,
    });

    const second = await paidCase({ system: "fuel" });
    expect((await (await signIn(server, expert)).post(`/api/cases/${second.caseId}/claim`)).status).toBe(200);
    const late = await second.tech.post(`/api/cases/${second.caseId}/withdraw`);
    expect(late.status).toBe(409);
    expect(late.body.error.code).toBe("invalid_transition");
    expect((await caseRow(server, second.caseId)).status).toBe("claimed");
    expect(fakeIntent(server, second.paid.paymentIntentId!).status).toBe("requires_capture");
  });

  it("a draft can be withdrawn without any payment", async () => {
    const t = await shop();
    const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
    const w = await t.tech.post(`/api/cases/${caseId}/withdraw`);
    expect(w.status).toBe(200);
    expect((await caseRow(server, caseId)).status).toBe("withdrawn");
    expect(await paymentsOf(server, caseId)).toEqual([]);
    const again = await t.tech.post(`/api/cases/${caseId}/withdraw`);
    expect(again.status).toBe(409);
  });

  it("a missed deadline cancels the hold with no capture, marks the case refunded and tells the shop", async () => {
    await parkAllExperts();
    const expert = await createExpert(server, { systems: ["engine-mechanical"] });
    const queued = await paidCase({ system: "engine-mechanical", tier: "priority" });
    const claimed = await paidCase({ system: "engine-mechanical", tier: "priority" });
    expect((await (await signIn(server, expert)).post(`/api/cases/${claimed.caseId}/claim`)).status).toBe(200);

    // 1 h 40 min in: a fifth of the 2-hour window left → the deadline-near warning
    clock.advance(100 * 60_000 + 1000);
    await runQueueSweeps(server.ctx);
    await server.mailCatcher!.waitFor((m) => m.to.includes(expert.email) && /^Deadline near/.test(m.subject));
    expect((await caseRow(server, claimed.caseId)).status).toBe("claimed");

    clock.advance(21 * 60_000);
    await runQueueSweeps(server.ctx);
    for (const x of [queued, claimed]) {
      expect((await caseRow(server, x.caseId)).status).toBe("refunded");
      const pi = fakeIntent(server, x.paid.paymentIntentId!);
      expect(pi.status).toBe("canceled");
      expect(pi.amount_received).toBe(0);
      const b = await expectLedgerBalanced(server, x.caseId);
      expect(b.capturedCents).toBe(0);
      expect(b.releasedCents).toBe(pi.amount);
      const m = await server.mailCatcher!.waitFor(
        (mm) => mm.to.includes(x.technicians[0].email) && /^Deadline missed, nothing charged/.test(mm.subject),
      );
      expect(m.text).toMatch(/nothing was charged/);
    }
    await server.mailCatcher!.waitFor((m) => m.to.includes(expert.email) && /^Deadline missed/.test(m.subject));
    // answering after the deadline is refused (409, the case is refunded) and captures nothing
    const late = await (
      await signIn(server, expert)
    )
      .post(`/api/cases/${claimed.caseId}/answer`)
      .send({ diagnosis: "x", rootCause: "y", recommendedFix: "z", testsToConfirm: "w" });
    expect(late.status).toBe(409);
    expect(late.body.error.code).toBe("invalid_transition");
    expect(fakeIntent(server, claimed.paid.paymentIntentId!).amount_received).toBe(0);
  });

  it("an invalid transition answers 409 and changes nothing", async () => {
    const t = await shop();
    const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
    const before = await caseRow(server, caseId);
    const confirm = await t.tech.post(`/api/cases/${caseId}/confirm`).send({ fixed: true });
    expect(confirm.status).toBe(409);
    expect(confirm.body.error.code).toBe("invalid_transition");
    const sent = await t.tech.post(`/api/cases/${caseId}/data-sent`).send({});
    expect(sent.status).toBe(409);
    const after = await caseRow(server, caseId);
    expect(after.status).toBe("draft");
    expect(after.updatedAt.getTime()).toBe(before.updatedAt.getTime());
    const events = await server.ctx.db.read((tx) =>
      tx.select().from(schema.caseEvent).where(eq(schema.caseEvent.caseId, caseId)).all(),
    );
    expect(events).toEqual([]);
    // a technician cannot claim (403), and nobody signed out can (401)
    await parkAllExperts();
    await createExpert(server, { systems: ["other"] });
    const { caseId: q } = await paidCase({ system: "other" });
    expect((await t.tech.post(`/api/cases/${q}/claim`)).status).toBe(403);
    const { default: request } = await import("supertest");
    expect((await request(server.url).post(`/api/cases/${q}/claim`)).status).toBe(401);
    expect((await caseRow(server, q)).status).toBe("queued");
  });
});
