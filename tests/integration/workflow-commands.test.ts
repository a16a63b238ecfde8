/**
 * Workflow commands added or made one in issue 15, against a real listening server: the desk hands
 * a claimed case to another expert (reassign); asking for more data again while the case waits
 * (the request is replaced, the pause goes on from the first request); availability for approved
 * experts only, by both addresses; a case's history for the same readers under both addresses.
 * The rules are docs/api.md "Queue and payments" as updated for issue 15.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createAdmin, createExpert, createShopTeam, signIn, type SignedInAgent } from "../factories";
import { caseRow, flushMail, insertDraftCase, mailsTo, movableClock, submitAndPay } from "../helpers/queue-flow";
import { schema } from "../../server/db/client";

let server: TestServer;
let admin: SignedInAgent;
let clock: ReturnType<typeof movableClock>;

beforeAll(async () => {
  server = await startTestServer();
  clock = movableClock(server);
  admin = await signIn(server, await createAdmin(server));
});
afterAll(async () => server?.close());

async function claimedBy(expertAgent: SignedInAgent) {
  const t = await createShopTeam(server, { technicians: 1 });
  const tech = await signIn(server, t.technicians[0]);
  const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
  await submitAndPay(server, tech, caseId);
  expect((await expertAgent.post(`/api/cases/${caseId}/claim`)).status).toBe(200);
  return { ...t, tech, caseId };
}

describe("reassign (admins)", () => {
  it("hands a claimed case to another approved expert; both are told; the status and deadline stay", async () => {
    const first = await createExpert(server, { systems: ["ignition"] });
    const second = await createExpert(server, { systems: ["ignition"] });
    const pending = await createExpert(server, { systems: ["ignition"], status: "pending" });
    const a = await signIn(server, first);
    const b = await signIn(server, second);
    const { caseId, tech } = await claimedBy(a);
    const before = await caseRow(server, caseId);

    expect((await tech.post(`/api/admin/cases/${caseId}/reassign`).send({ expertId: second.id })).status).toBe(403);
    expect((await a.post(`/api/admin/cases/${caseId}/reassign`).send({ expertId: second.id })).status).toBe(403);
    const toPending = await admin.post(`/api/admin/cases/${caseId}/reassign`).send({ expertId: pending.id });
    expect(toPending.status).toBe(409);
    expect(toPending.body.error.code).toBe("expert_unavailable");
    const toSame = await admin.post(`/api/admin/cases/${caseId}/reassign`).send({ expertId: first.id });
    expect(toSame.status).toBe(409);

    const r = await admin.post(`/api/admin/cases/${caseId}/reassign`).send({ expertId: second.id });
    expect(r.status, JSON.stringify(r.body)).toBe(200);
    expect(r.body).toMatchObject({ id: caseId, status: "claimed", expertId: second.id });
    const after = await caseRow(server, caseId);
    expect(after.deadlineAt!.getTime()).toBe(before.deadlineAt!.getTime());
    // the new expert works on it; the first no longer sees it
    expect((await b.get(`/api/cases/${caseId}`)).status).toBe(200);
    expect((await a.get(`/api/cases/${caseId}`)).status).toBe(404);
    expect(
      (await b.post(`/api/cases/${caseId}/request-data`).send({ message: "Capture coil 1 at idle, please." })).status,
    ).toBe(200);
    await server.mailCatcher!.waitFor((m) => m.to.includes(second.email) && /^Case handed to you/.test(m.subject));
    const notices = await server.ctx.db.read((tx) =>
      tx.select().from(schema.notification).where(eq(schema.notification.userId, first.id)).all(),
    );
    expect(notices.some((n) => n.kind === "case_reassigned" && n.caseId === caseId)).toBe(true);
    const history = await tech.get(`/api/cases/${caseId}/history`);
    expect(
      history.body.items.some(
        (i: { type: string; actorRole: string }) => i.type === "reassigned" && i.actorRole === "admin",
      ),
    ).toBe(true);
    // a queued case is claimed, not reassigned
    const { caseId: queued } = await (async () => {
      const t = await createShopTeam(server, { technicians: 1 });
      const id = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
      await submitAndPay(server, await signIn(server, t.technicians[0]), id);
      return { caseId: id };
    })();
    const early = await admin.post(`/api/admin/cases/${queued}/reassign`).send({ expertId: second.id });
    expect(early.status).toBe(409);
    expect(early.body.error.code).toBe("invalid_transition");
  });
});

describe("more data, asked again", () => {
  it("replaces the request while the case waits; the deadline moves on by the whole wait", async () => {
    const e = await signIn(server, await createExpert(server, { systems: ["ignition"] }));
    const { caseId, tech, technicians } = await claimedBy(e);
    const deadline = (await caseRow(server, caseId)).deadlineAt!.getTime();
    expect((await e.post(`/api/cases/${caseId}/request-data`).send({ message: "Secondary on coil 2." })).status).toBe(
      200,
    );
    clock.advance(20 * 60_000);
    const again = await e
      .post(`/api/cases/${caseId}/request-data`)
      .send({ message: "Secondary on coil 2 and coil 3, at 2500 rpm." });
    expect(again.status).toBe(200);
    expect(again.body.status).toBe("needs_data");
    expect((await tech.get(`/api/cases/${caseId}/workflow`)).body.needsDataMessage).toContain("coil 3");
    clock.advance(10 * 60_000);
    expect((await tech.post(`/api/cases/${caseId}/data-sent`).send({})).status).toBe(200);
    // paused from the first request: 30 minutes in all
    expect((await caseRow(server, caseId)).deadlineAt!.getTime() - deadline).toBeGreaterThanOrEqual(30 * 60_000);
    await flushMail(server);
    expect(mailsTo(server, technicians[0].email, /^More data requested/)).toHaveLength(2);
    // the shop cannot ask, and a case not claimed cannot be asked about
    expect((await tech.post(`/api/cases/${caseId}/request-data`).send({ message: "x" })).status).toBe(403);
  });
});

describe("the workflow panel of a draft", () => {
  it("answers the shop with the price list and the submit ability (the read changes nothing)", async () => {
    const t = await createShopTeam(server, { technicians: 1 });
    const tech = await signIn(server, t.technicians[0]);
    const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
    const w = await tech.get(`/api/cases/${caseId}/workflow`);
    expect(w.status, JSON.stringify(w.body)).toBe(200);
    expect(w.body).toMatchObject({
      status: "draft",
      payment: null,
      notFixedCount: 0,
      abilities: { submit: true, withdraw: true, claim: false },
    });
    expect(w.body.pricing.tiers.map((x: { id: string }) => x.id)).toEqual(["standard", "priority"]);
    expect(
      await server.ctx.db.read((tx) =>
        tx.select().from(schema.caseQueueState).where(eq(schema.caseQueueState.caseId, caseId)).all(),
      ),
    ).toEqual([]);
  });
});

describe("one rule for availability and for the history", () => {
  it("only approved experts set availability, by either address", async () => {
    const pending = await signIn(server, await createExpert(server, { status: "pending" }));
    expect((await pending.put("/api/queue/availability").send({ available: true })).status).toBe(403);
    expect((await pending.patch("/api/experts/me").send({ available: true })).status).toBe(403);
    const approved = await signIn(server, await createExpert(server, { available: false }));
    expect((await approved.put("/api/queue/availability").send({ available: true })).body).toEqual({ available: true });
    expect((await approved.patch("/api/experts/me").send({ available: false })).body.profile.available).toBe(false);
  });

  it("GET …/events and GET …/history answer the same readers with the same entries", async () => {
    const e = await signIn(server, await createExpert(server, { systems: ["ignition"] }));
    const other = await signIn(server, await createExpert(server, { systems: ["ignition"] }));
    const { caseId, tech } = await claimedBy(e);
    const stranger = await signIn(server, (await createShopTeam(server)).technicians[0]);
    for (const agent of [tech, e, admin]) {
      const ev = await agent.get(`/api/cases/${caseId}/events`);
      const hi = await agent.get(`/api/cases/${caseId}/history`);
      expect(ev.status).toBe(200);
      expect(ev.body.items).toEqual(hi.body.items);
    }
    for (const agent of [other, stranger]) {
      expect((await agent.get(`/api/cases/${caseId}/events`)).status).toBe(404);
      expect((await agent.get(`/api/cases/${caseId}/history`)).status).toBe(404);
    }
  });
});
