/**
 * Notices of the live review (issue 13), against a real listening server with real socket.io
 * clients: a new chat message or mark tells the others on the case (whoever opened it, the shop's
 * owners, the expert) in the app — pushed live to their open pages — and by mail as their settings
 * say; a burst folds into one unread notice and one mail; the author and whoever is in the case's
 * live review are not told; a request for more data is told once (by the request itself). Unread
 * counts on the case list follow what each reader has seen. The rules are docs/api.md "Notices".
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createExpert, createShopTeam, signIn, type ShopTeam, type SignedInAgent } from "../factories";
import { flushMail, mailsTo } from "../helpers/queue-flow";
import { ask, connected, insertLiveCase, liveClient, until, type LiveClient } from "./realtime-helpers";
import { schema } from "../../server/db/client";

let server: TestServer;
const sockets: LiveClient[] = [];

beforeAll(async () => {
  server = await startTestServer();
});
afterAll(async () => {
  for (const s of sockets) s.disconnect();
  await server?.close();
});

async function socketOf(agent: SignedInAgent): Promise<LiveClient> {
  const s = await connected(liveClient(server.url.replace("localhost", "127.0.0.1"), { cookie: agent.cookie }));
  sockets.push(s);
  return s;
}

interface Scene {
  team: ShopTeam;
  tech: SignedInAgent;
  owner: SignedInAgent;
  expert: SignedInAgent;
  expertId: string;
  caseId: string;
  traceId: string;
}

/** A shop (owner + technician who opened the case) and the expert it is claimed by. */
async function scene(): Promise<Scene> {
  const team = await createShopTeam(server, { technicians: 1 });
  const e = await createExpert(server, { systems: ["ignition"] });
  const { caseId, traceId } = await insertLiveCase(server.ctx, {
    shopId: team.shop.id,
    createdBy: team.technicians[0].id,
    expertId: e.id,
  });
  return {
    team,
    tech: await signIn(server, team.technicians[0]),
    owner: await signIn(server, team.owner),
    expert: await signIn(server, e),
    expertId: e.id,
    caseId,
    traceId,
  };
}

const noticesOf = (userId: string, caseId: string, kind: string) =>
  server.ctx.db.read((tx) =>
    tx
      .select()
      .from(schema.notification)
      .where(
        and(
          eq(schema.notification.userId, userId),
          eq(schema.notification.caseId, caseId),
          eq(schema.notification.kind, kind),
        ),
      )
      .all(),
  );

/** Waits until an asynchronous condition holds (the notices are stored after the live write's commit). */
async function untilAsync(pred: () => Promise<boolean>, ms: number, what: string): Promise<void> {
  const end = Date.now() + ms;
  while (!(await pred())) {
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 20));
  }
}

async function joined(agent: SignedInAgent, caseId: string): Promise<LiveClient> {
  const s = await socketOf(agent);
  const ack = await ask(s, "case:join", { caseId, since: 0 });
  expect(ack.ok, JSON.stringify(ack)).toBe(true);
  return s;
}

describe("a new chat message", () => {
  it("tells the shop in the app (pushed live, without a reload) and by mail; a burst folds into one", async () => {
    const sc = await scene();
    // the technician's open page: a socket in the user's own room, not in the case
    const techPage = await socketOf(sc.tech);
    const pushed: { kind: string; caseId: string | null; title: string }[] = [];
    techPage.on("notification", (n) => pushed.push(n));

    const exp = await joined(sc.expert, sc.caseId);
    const sent = await ask(exp, "chat:send", { text: "Can you capture coil 4 at 2500 rpm?", clientId: "client-m1" });
    expect(sent.ok).toBe(true);
    await until(() => pushed.length === 1, 5000, "the notice pushed to the technician");
    expect(pushed[0]).toMatchObject({ kind: "new_message", caseId: sc.caseId });
    expect(pushed[0].title).toMatch(/^New message from /);

    // the technician and the owner each have one unread notice; the author none
    const techId = sc.team.technicians[0].id;
    expect(await noticesOf(techId, sc.caseId, "new_message")).toHaveLength(1);
    expect(await noticesOf(sc.team.owner.id, sc.caseId, "new_message")).toHaveLength(1);
    expect(await noticesOf(sc.expertId, sc.caseId, "new_message")).toHaveLength(0);
    const list = await sc.tech.get("/api/notifications");
    expect(list.body.items[0]).toMatchObject({
      kind: "new_message",
      count: 1,
      read: false,
      link: `/cases/${sc.caseId}`,
    });
    expect(list.body.items[0].body).toContain("Can you capture coil 4 at 2500 rpm?");

    // two more: still one notice, now standing for three; one mail only
    await ask(exp, "chat:send", { text: "And one at idle.", clientId: "client-m2" });
    await ask(exp, "chat:send", { text: "Thanks.", clientId: "client-m3" });
    // a notice still being stored when the next message comes stands for both (server/realtime/notices.ts):
    // the folded count is what says how many there were, and a push follows the first
    await untilAsync(
      async () => (await noticesOf(techId, sc.caseId, "new_message"))[0]?.count === 3,
      5000,
      "the folded notice",
    );
    await until(() => pushed.length >= 2, 5000, "the folded notice pushed");
    const folded = await noticesOf(techId, sc.caseId, "new_message");
    expect(folded).toHaveLength(1);
    expect(folded[0].count).toBe(3);
    expect(folded[0].title).toMatch(/^3 new messages: /);
    await flushMail(server);
    expect(mailsTo(server, sc.team.technicians[0].email, /^New message from /)).toHaveLength(1);
    expect(mailsTo(server, sc.team.owner.email, /^New message from /)).toHaveLength(1);
    expect(mailsTo(server, sc.team.technicians[0].email, /new messages/)).toHaveLength(0);
  });

  it("is not told to whoever is in the case's live review, nor to its author", async () => {
    const sc = await scene();
    await joined(sc.tech, sc.caseId);
    const exp = await joined(sc.expert, sc.caseId);
    await ask(exp, "chat:send", { text: "Looking at it now.", clientId: "client-p1" });
    // the owner is not in the room: told; the technician is in it, the expert wrote it: not told
    await untilAsync(
      async () => (await noticesOf(sc.team.owner.id, sc.caseId, "new_message")).length > 0,
      5000,
      "the owner's notice",
    );
    expect(await noticesOf(sc.team.technicians[0].id, sc.caseId, "new_message")).toHaveLength(0);
    expect(await noticesOf(sc.expertId, sc.caseId, "new_message")).toHaveLength(0);
  });

  it("a request for more data in the chat does not add a message notice", async () => {
    const sc = await scene();
    const exp = await joined(sc.expert, sc.caseId);
    const r = await ask(exp, "chat:send", {
      text: "Another capture, please",
      request: { capture: "secondary-ignition", cylinder: 4, conditions: "warm, idle" },
      clientId: "client-r1",
    } as never);
    expect(r.ok, JSON.stringify(r)).toBe(true);
    await ask(exp, "chat:send", { text: "marker", clientId: "client-r2" });
    await untilAsync(
      async () => (await noticesOf(sc.team.owner.id, sc.caseId, "new_message")).length === 1,
      5000,
      "the marker's notice",
    );
    expect((await noticesOf(sc.team.owner.id, sc.caseId, "new_message"))[0].count).toBe(1);
  });
});

describe("a new mark", () => {
  it("tells the others in the app, and by mail only to those who asked for it", async () => {
    const sc = await scene();
    const put = await sc.owner
      .put("/api/me/notice-settings")
      .send({ topics: [{ topic: "marks", inApp: true, mail: true }] });
    expect(put.status, JSON.stringify(put.body)).toBe(200);
    const exp = await joined(sc.expert, sc.caseId);
    const a = await ask(exp, "annotation:create", {
      traceId: sc.traceId,
      kind: "pin",
      t0: 0.012,
      level: 12,
      label: "Short burn here",
      clientId: "client-k1",
    } as never);
    expect(a.ok, JSON.stringify(a)).toBe(true);
    await untilAsync(
      async () => (await noticesOf(sc.team.owner.id, sc.caseId, "new_mark")).length === 1,
      5000,
      "the owner's mark notice",
    );
    await untilAsync(
      async () => (await noticesOf(sc.team.technicians[0].id, sc.caseId, "new_mark")).length === 1,
      5000,
      "the technician's mark notice",
    );
    await flushMail(server);
    // marks: in the app by default, by mail only when chosen (the owner chose it)
    expect(mailsTo(server, sc.team.owner.email, /marked a trace/)).toHaveLength(1);
    expect(mailsTo(server, sc.team.technicians[0].email, /marked a trace/)).toHaveLength(0);
  });
});

describe("notice settings", () => {
  it("lists every topic with its default; a change is kept; nothing comes for a topic turned off", async () => {
    const sc = await scene();
    const before = await sc.tech.get("/api/me/notice-settings");
    expect(before.status).toBe(200);
    expect(before.body.topics.map((t: { topic: string }) => t.topic)).toEqual([
      "messages",
      "marks",
      "data_requests",
      "case_updates",
      "money",
    ]);
    expect(before.body.topics[0]).toMatchObject({ topic: "messages", inApp: true, mail: true });
    expect(before.body.topics[1]).toMatchObject({ topic: "marks", inApp: true, mail: false });

    const off = await sc.tech
      .put("/api/me/notice-settings")
      .send({ topics: [{ topic: "messages", inApp: false, mail: false }] });
    expect(off.status).toBe(200);
    expect(off.body.topics[0]).toMatchObject({ topic: "messages", inApp: false, mail: false });
    expect(off.body.topics[2]).toMatchObject({ topic: "data_requests", inApp: true, mail: true });
    expect((await sc.tech.get("/api/me/notice-settings")).body.topics[0].inApp).toBe(false);

    const exp = await joined(sc.expert, sc.caseId);
    await ask(exp, "chat:send", { text: "Quiet please?", clientId: "client-q1" });
    await untilAsync(
      async () => (await noticesOf(sc.team.owner.id, sc.caseId, "new_message")).length === 1,
      5000,
      "the owner's notice",
    );
    await flushMail(server);
    expect(await noticesOf(sc.team.technicians[0].id, sc.caseId, "new_message")).toHaveLength(0);
    expect(mailsTo(server, sc.team.technicians[0].email, /^New message/)).toHaveLength(0);
  });

  it("refuses an unknown topic and a signed-out caller", async () => {
    const sc = await scene();
    const bad = await sc.tech
      .put("/api/me/notice-settings")
      .send({ topics: [{ topic: "gossip", inApp: true, mail: true }] });
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe("validation_failed");
    const anon = await fetch(`${server.url.replace("localhost", "127.0.0.1")}/api/me/notice-settings`);
    expect(anon.status).toBe(401);
  });
});

describe("unread counts on the case list", () => {
  it("count others' new messages and marks since the reader last had the case open", async () => {
    const sc = await scene();
    const exp = await joined(sc.expert, sc.caseId);
    await ask(exp, "chat:send", { text: "one", clientId: "client-u1" });
    await ask(exp, "chat:send", { text: "two", clientId: "client-u2" });
    await ask(exp, "annotation:create", {
      traceId: sc.traceId,
      kind: "pin",
      t0: 0.01,
      level: 5,
      clientId: "client-u3",
    } as never);
    const row = async (agent: SignedInAgent) =>
      (await agent.get("/api/cases")).body.items.find((i: { id: string }) => i.id === sc.caseId);
    expect((await row(sc.tech)).unread).toEqual({ messages: 2, marks: 1 });
    expect((await row(sc.owner)).unread).toEqual({ messages: 2, marks: 1 });
    // the expert wrote them: nothing unread for the expert
    expect((await row(sc.expert)).unread).toEqual({ messages: 0, marks: 0 });

    // the technician opens the case: read, and the message notice with it
    await untilAsync(
      async () => (await noticesOf(sc.team.technicians[0].id, sc.caseId, "new_message")).length === 1,
      5000,
      "notice",
    );
    const seen = await sc.tech.post(`/api/cases/${sc.caseId}/seen`);
    expect(seen.status).toBe(200);
    expect(seen.body).toMatchObject({ caseId: sc.caseId, seq: 3 });
    expect(seen.body.noticesRead).toBeGreaterThanOrEqual(1);
    expect((await row(sc.tech)).unread).toEqual({ messages: 0, marks: 0 });
    expect((await noticesOf(sc.team.technicians[0].id, sc.caseId, "new_message")).every((n) => n.readAt)).toBe(true);
    // the owner has not looked yet
    expect((await row(sc.owner)).unread).toEqual({ messages: 2, marks: 1 });
    // joining the live review reads the record too
    await joined(sc.owner, sc.caseId);
    expect((await row(sc.owner)).unread).toEqual({ messages: 0, marks: 0 });
    // while in the room, a new message is read at once
    await ask(exp, "chat:send", { text: "three", clientId: "client-u4" });
    expect((await row(sc.owner)).unread).toEqual({ messages: 0, marks: 0 });
    expect((await row(sc.tech)).unread).toEqual({ messages: 1, marks: 0 });
  });

  it("POST …/seen answers 404 for a case the reader may not see, 401 signed out", async () => {
    const sc = await scene();
    const other = await createShopTeam(server, { technicians: 1 });
    const stranger = await signIn(server, other.technicians[0]);
    expect((await stranger.post(`/api/cases/${sc.caseId}/seen`)).status).toBe(404);
    expect((await sc.tech.post(`/api/cases/not-a-case/seen`)).status).toBe(404);
    const anon = await fetch(`${server.url.replace("localhost", "127.0.0.1")}/api/cases/${sc.caseId}/seen`, {
      method: "POST",
      headers: { origin: server.url },
    });
    expect(anon.status).toBe(401);
  });
});
