import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import type { SQLiteTable } from "drizzle-orm/sqlite-core";
import http from "node:http";
import { and, eq, sql, type SQL } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createAdmin, createExpert, createShopTeam, signIn, type ShopTeam, type SignedInAgent } from "../factories";
import { schema } from "../../server/db/client";
import type {
  AnnotationRecord,
  JoinOk,
  MessageRecord,
  PointerPayload,
  PresencePayload,
  ViewPayload,
} from "../../shared/realtime";
import {
  ask,
  connected,
  insertLiveCase,
  liveClient,
  sleep,
  until,
  type LiveCase,
  type LiveClient,
} from "./realtime-helpers";

/**
 * Live review over socket.io with real clients on loopback. Expected behaviour comes from the
 * public events contract (docs/api.md, "Live review") and from socket.io 4's documented client
 * semantics: acknowledgements, the "connect_error" event carrying a middleware's error, and the
 * disconnect reason "io server disconnect" when the server ends a socket
 * (socket.io docs, "Client API" → Socket → Event: 'disconnect').
 */

let server: TestServer;
let shopA: ShopTeam;
let shopB: ShopTeam;
let techA: SignedInAgent;
let techB: SignedInAgent;
let expert: SignedInAgent;
let otherExpert: SignedInAgent;
let admin: SignedInAgent;
let expertId: string;
const open: LiveClient[] = [];

const count = async (table: SQLiteTable, where?: SQL) =>
  (await server.ctx.db.read((tx) =>
    tx
      .select({ n: sql<number>`count(*)` })
      .from(table)
      .where(where)
      .get(),
  ))!.n;

async function client(agent: SignedInAgent, opts: Parameters<typeof liveClient>[1] = {}): Promise<LiveClient> {
  const s = liveClient(server.url.replace("localhost", "127.0.0.1"), { cookie: agent.cookie, ...opts });
  open.push(s);
  return connected(s);
}

async function joined(
  agent: SignedInAgent,
  caseId: string,
  since?: number,
  opts: Parameters<typeof liveClient>[1] = {},
): Promise<{ s: LiveClient; ack: JoinOk }> {
  const s = await client(agent, opts);
  const ack = await ask(s, "case:join", since === undefined ? { caseId } : { caseId, since });
  if (!ack.ok) throw new Error(`join refused: ${JSON.stringify(ack)}`);
  return { s, ack };
}

async function newCase(): Promise<LiveCase> {
  return await insertLiveCase(server.ctx, { shopId: shopA.shop.id, createdBy: shopA.technicians[0].id, expertId });
}

beforeAll(async () => {
  server = await startTestServer();
  shopA = await createShopTeam(server);
  shopB = await createShopTeam(server);
  techA = await signIn(server, shopA.technicians[0]);
  techB = await signIn(server, shopB.technicians[0]);
  const e = await createExpert(server);
  expertId = e.id;
  expert = await signIn(server, e);
  otherExpert = await signIn(server, await createExpert(server));
  admin = await signIn(server, await createAdmin(server));
});
afterEach(() => {
  while (open.length) open.pop()!.disconnect();
});
afterAll(async () => {
  await server?.close();
});

describe("joining a case", () => {
  it("lets the shop's tech, the claimed expert and an admin in, with presence and abilities", async () => {
    const c = await newCase();
    const tech = await joined(techA, c.caseId);
    expect(tech.ack).toMatchObject({
      ok: true,
      caseId: c.caseId,
      seq: 0,
      annotations: [],
      messages: [],
      reset: false,
      caseStatus: "claimed",
    });
    expect(tech.ack.abilities).toEqual({ annotate: true, chat: true, requestData: false });
    expect(tech.ack.you.userId).toBe(shopA.technicians[0].id);
    expect(tech.ack.you.color).toMatch(/^#[0-9a-f]{6}$/i);

    const presenceSeen: PresencePayload[] = [];
    tech.s.on("presence", (p) => presenceSeen.push(p));
    const exp = await joined(expert, c.caseId);
    expect(exp.ack.abilities).toEqual({ annotate: true, chat: true, requestData: true });
    expect(exp.ack.presence.participants.map((p) => p.userId).sort()).toEqual(
      [expertId, shopA.technicians[0].id].sort(),
    );
    // the expert and the tech draw in different colours (desk and shop palettes do not overlap)
    expect(exp.ack.you.color).not.toBe(tech.ack.you.color);
    await until(
      () => presenceSeen.some((p) => p.participants.some((x) => x.userId === expertId)),
      2000,
      "presence of the expert at the tech",
    );

    const adm = await joined(admin, c.caseId);
    expect(adm.ack.abilities).toEqual({ annotate: false, chat: false, requestData: false });
    const refused = await ask(adm.s, "annotation:create", { traceId: c.traceId, kind: "pin", t0: 0.01 });
    expect(refused).toMatchObject({ ok: false, error: { code: "forbidden" } });
  });

  it("refuses a member of another shop and an expert who did not claim the case: error acks, nothing stored, nothing received", async () => {
    const c = await newCase();
    const tech = await joined(techA, c.caseId);

    const intruders = [await client(techB), await client(otherExpert)];
    const received: string[] = [];
    for (const s of intruders) s.onAny((event) => received.push(event));

    for (const s of intruders) {
      const join = await ask(s, "case:join", { caseId: c.caseId });
      // another tenant's case answers like a missing one (DEVELOPERS.md decision 5)
      expect(join).toEqual({ ok: false, error: { code: "not_found", message: "Case not found." } });
      const create = await ask(s, "annotation:create", {
        traceId: c.traceId,
        kind: "pin",
        t0: 0.02,
        label: "not mine",
      });
      expect(create).toMatchObject({ ok: false, error: { code: "not_joined" } });
      const chat = await ask(s, "chat:send", { text: "hello?" });
      expect(chat).toMatchObject({ ok: false, error: { code: "not_joined" } });
      s.emit("pointer:move", { traceId: c.traceId, t: 0.01, v: 1 });
      s.emit("view:follow", { traceId: c.traceId, t0: 0, t1: 0.05 });
    }
    // the REST mirror refuses them the same way
    expect((await techB.get(`/api/cases/${c.caseId}/annotations`)).status).toBe(404);
    expect((await otherExpert.get(`/api/cases/${c.caseId}/messages`)).status).toBe(404);

    // activity in the room reaches none of them
    const a = await ask(tech.s, "annotation:create", {
      traceId: c.traceId,
      kind: "pin",
      t0: 0.03,
      label: "firing line",
    });
    expect(a.ok).toBe(true);
    await ask(tech.s, "chat:send", { text: "Plug 4 gap checked" });
    await sleep(200);
    expect(received).toEqual([]);
    expect(await count(schema.annotation, eq(schema.annotation.caseId, c.caseId))).toBe(1);
    expect(await count(schema.message, eq(schema.message.caseId, c.caseId))).toBe(1);
  });

  it("validates payloads and refuses marks off the trace", async () => {
    const c = await newCase();
    const { s } = await joined(techA, c.caseId);
    const bad = await ask(s, "annotation:create", {
      traceId: c.traceId,
      kind: "span",
      t0: 0.01,
    } as unknown as Parameters<typeof ask<"annotation:create">>[2]);
    expect(bad).toMatchObject({ ok: false, error: { code: "validation_failed" } });
    expect(
      (bad as unknown as { error: { details: { fields: { path: string }[] } } }).error.details.fields[0].path,
    ).toBe("t1");
    const off = await ask(s, "annotation:create", { traceId: c.traceId, kind: "pin", t0: 5 });
    expect(off).toMatchObject({ ok: false, error: { code: "validation_failed" } });
    const other = await newCase();
    const foreignTrace = await ask(s, "annotation:create", { traceId: other.traceId, kind: "pin", t0: 0.01 });
    expect(foreignTrace).toMatchObject({ ok: false, error: { code: "not_found" } });
    expect(await count(schema.annotation, eq(schema.annotation.caseId, c.caseId))).toBe(0);
  });
});

describe("annotations", () => {
  it("two clients see each other's annotations in the same order, each with the stored seq", async () => {
    const c = await newCase();
    const tech = await joined(techA, c.caseId);
    const exp = await joined(expert, c.caseId);
    const seen = { tech: [] as AnnotationRecord[], exp: [] as AnnotationRecord[] };
    tech.s.on("annotation:created", (a) => seen.tech.push(a));
    exp.s.on("annotation:created", (a) => seen.exp.push(a));

    // both write at once, interleaved; each side's own records arrive as acknowledgements, which
    // are recorded in the ack callback itself (a promise would defer them behind later packets)
    const refused: unknown[] = [];
    for (let i = 0; i < 40; i++) {
      const who = i % 2 === 0 ? { k: "tech" as const, s: tech.s } : { k: "exp" as const, s: exp.s };
      who.s.emit(
        "annotation:create",
        { traceId: c.traceId, kind: "pin", t0: 0.001 * (i + 1), level: 10 + i, label: `#${i}`, channel: "A" },
        (r) => {
          if (r.ok) seen[who.k].push(r.annotation);
          else refused.push(r);
        },
      );
    }
    await until(() => seen.tech.length === 40 && seen.exp.length === 40, 5000, "all 40 at both");
    expect(refused).toEqual([]);
    const order = (xs: AnnotationRecord[]) => xs.map((a) => a.id);
    expect(order(seen.tech)).toEqual(order(seen.exp));
    const seqs = seen.tech.map((a) => a.seq);
    expect(seqs).toEqual(Array.from({ length: 40 }, (_, i) => i + 1)); // strictly increasing per case, from 1
    expect(seen.tech.find((a) => a.label === "#1")).toMatchObject({
      authorId: expertId,
      kind: "pin",
      level: 11,
      channel: "A",
      deletedAt: null,
    });

    // the stored record matches what was sent
    const rest = await techA.get(`/api/cases/${c.caseId}/annotations`);
    expect(rest.status).toBe(200);
    expect(rest.body.seq).toBe(40);
    expect(rest.body.annotations.map((a: AnnotationRecord) => a.id)).toEqual(order(seen.tech));
  });

  it("updates and deletes by the author get a new seq; a replay since reproduces the final state", async () => {
    const c = await newCase();
    const tech = await joined(techA, c.caseId);
    const exp = await joined(expert, c.caseId);
    const mk = async (t0: number, label: string) => {
      const r = await ask(exp.s, "annotation:create", { traceId: c.traceId, kind: "pin", t0, label });
      if (!r.ok) throw new Error(JSON.stringify(r));
      return r.annotation;
    };
    const a1 = await mk(0.01, "one");
    const a2 = await mk(0.02, "two");
    const a3 = await mk(0.03, "three");
    const techSince = 1; // the tech "saw" a1 only, then dropped

    const notOwner = await ask(tech.s, "annotation:update", { id: a2.id, label: "mine now" });
    expect(notOwner).toMatchObject({ ok: false, error: { code: "forbidden" } });
    const updated = await ask(exp.s, "annotation:update", { id: a2.id, label: "two, moved", t0: 0.025 });
    expect(updated).toMatchObject({ ok: true, annotation: { id: a2.id, label: "two, moved", t0: 0.025, seq: 4 } });
    const deleted = await ask(exp.s, "annotation:delete", { id: a1.id });
    expect(deleted.ok && deleted.annotation.seq).toBe(5);
    expect(deleted.ok && deleted.annotation.deletedAt).toBeTruthy();
    const again = await ask(exp.s, "annotation:delete", { id: a1.id });
    expect(again).toMatchObject({ ok: false, error: { code: "not_found" } });

    const replay = await joined(techA, c.caseId, techSince);
    expect(replay.ack.seq).toBe(5);
    expect(replay.ack.annotations.map((a) => [a.id, a.seq, a.deletedAt != null])).toEqual([
      [a3.id, 3, false],
      [a2.id, 4, false],
      [a1.id, 5, true],
    ]);
    // applying the replay to what the tech had gives exactly the stored final state
    const state = new Map<string, AnnotationRecord>([[a1.id, a1]]);
    for (const a of replay.ack.annotations) {
      if (a.deletedAt) state.delete(a.id);
      else state.set(a.id, a);
    }
    const fresh = await joined(techA, c.caseId, 0);
    expect([...state.values()].sort((x, y) => x.seq - y.seq)).toEqual(fresh.ack.annotations);
    expect(fresh.ack.annotations.map((a) => a.label)).toEqual(["three", "two, moved"]);
  });

  it("a retried create with the same clientId is stored once", async () => {
    const c = await newCase();
    const { s } = await joined(techA, c.caseId);
    const payload = {
      traceId: c.traceId,
      kind: "note" as const,
      t0: 0.05,
      label: "Coil 4 connector was loose",
      clientId: "retry-test-0001",
    };
    const first = await ask(s, "annotation:create", payload);
    const second = await ask(s, "annotation:create", payload);
    expect(first.ok && second.ok).toBe(true);
    expect(second.ok && second.annotation.id).toBe(first.ok && first.annotation.id);
    expect(await count(schema.annotation, eq(schema.annotation.caseId, c.caseId))).toBe(1);
  });

  it("a client that drops during a burst of 500 annotations gets every missed one exactly once after reconnecting with since", async () => {
    const c = await newCase();
    const exp = await joined(expert, c.caseId);
    const techSocket = liveClient(server.url.replace("localhost", "127.0.0.1"), {
      cookie: techA.cookie,
      reconnection: true,
      reconnectionDelay: 300,
    });
    open.push(techSocket);

    // the client side of the protocol: apply records above lastSeq, re-join with since on every connect
    let lastSeq = 0;
    const receipts = new Map<string, number>();
    const applied: number[] = [];
    let joins = 0;
    const take = (a: AnnotationRecord) => {
      receipts.set(a.id, (receipts.get(a.id) ?? 0) + 1);
      if (a.seq > lastSeq) {
        applied.push(a.seq);
        lastSeq = a.seq;
      }
    };
    techSocket.on("annotation:created", take);
    techSocket.on("connect", () => {
      // handled in the ack callback itself, before any later packet (as src/features/live does)
      techSocket.emit("case:join", { caseId: c.caseId, since: lastSeq }, (ack) => {
        if (ack.ok) {
          joins += 1;
          for (const a of ack.annotations) take(a);
        }
      });
    });
    await connected(techSocket);
    await until(() => joins === 1, 2000, "first join");

    const acked: AnnotationRecord[] = [];
    let dropped = false;
    for (let i = 0; i < 500; i++) {
      const p = ask(exp.s, "annotation:create", {
        traceId: c.traceId,
        kind: "pin",
        t0: (i + 1) * 0.0001,
        label: `b${i}`,
      }).then((r) => {
        if (!r.ok) throw new Error(JSON.stringify(r));
        acked.push(r.annotation);
      });
      if (i % 50 === 49) await p; // let the burst progress in waves
      if (!dropped && receipts.size >= 120) {
        dropped = true;
        techSocket.io.engine.close(); // the network goes away mid-burst; the manager reconnects
      }
    }
    await until(() => acked.length === 500, 10_000, "500 acknowledgements");
    await until(() => receipts.size === 500, 10_000, "all 500 at the reconnected tech");
    expect(dropped).toBe(true);
    expect(joins).toBeGreaterThanOrEqual(2);
    expect([...receipts.values()].every((n) => n === 1)).toBe(true);
    expect(applied).toEqual(acked.map((a) => a.seq).sort((x, y) => x - y));
    expect(applied).toEqual(Array.from({ length: 500 }, (_, i) => i + 1));
  });
});

describe("chat, data requests, presence, pointers, follow", () => {
  it("chat messages and a request for more data reach the room after the commit", async () => {
    const c = await newCase();
    const tech = await joined(techA, c.caseId);
    const exp = await joined(expert, c.caseId);
    const techGot: MessageRecord[] = [];
    const expGot: MessageRecord[] = [];
    tech.s.on("chat:message", (m) => techGot.push(m));
    exp.s.on("chat:message", (m) => expGot.push(m));

    const request = {
      capture: "secondary-ignition" as const,
      cylinder: 4,
      settings: { voltsPerDiv: 5, timePerDivS: 0.002, triggerSlope: "rising" as const },
      conditions: "warm, 2500 rpm",
    };
    const r = await ask(exp.s, "chat:send", { text: "Please capture cylinder 4 at 2 ms/div", request });
    expect(r).toMatchObject({
      ok: true,
      message: { kind: "data_request", request, authorId: expertId, authorRole: "expert", seq: 1 },
    });
    const techRequest = await ask(tech.s, "chat:send", { text: "", request });
    expect(techRequest).toMatchObject({ ok: false, error: { code: "forbidden" } });
    const reply = await ask(tech.s, "chat:send", { text: "Capturing now" });
    expect(reply).toMatchObject({ ok: true, message: { kind: "text", text: "Capturing now", seq: 2 } });
    await until(() => techGot.length === 1 && expGot.length === 1, 2000, "messages");
    expect(techGot[0].id).toBe(r.ok && r.message.id);
    expect(expGot[0].id).toBe(reply.ok && reply.message.id);
    const empty = await ask(tech.s, "chat:send", { text: "   " });
    expect(empty).toMatchObject({ ok: false, error: { code: "validation_failed" } });

    const rest = await expert.get(`/api/cases/${c.caseId}/messages?since=1`);
    expect(rest.status).toBe(200);
    expect(rest.body.messages.map((m: MessageRecord) => m.text)).toEqual(["Capturing now"]);
    expect(rest.body.seq).toBe(2);
    const bad = await expert.get(`/api/cases/${c.caseId}/messages?since=two`);
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe("validation_failed");
    const anon = await fetch(`http://127.0.0.1:${server.port}/api/cases/${c.caseId}/annotations`);
    expect(anon.status).toBe(401);
  });

  it("shares typing, pointers and the followed view", async () => {
    const c = await newCase();
    const tech = await joined(techA, c.caseId);
    const exp = await joined(expert, c.caseId);
    const presence: PresencePayload[] = [];
    const pointers: PointerPayload[] = [];
    const views: ViewPayload[] = [];
    tech.s.on("presence", (p) => presence.push(p));
    tech.s.on("pointer", (p) => pointers.push(p));
    tech.s.on("view", (v) => views.push(v));

    exp.s.emit("chat:typing", { typing: true });
    await until(
      () => presence.some((p) => p.participants.find((x) => x.userId === expertId)?.typing === true),
      2000,
      "typing",
    );

    // 50 moves in a burst are coalesced (at most 20 per second are forwarded); the last one arrives
    for (let i = 0; i < 50; i++) exp.s.emit("pointer:move", { traceId: c.traceId, t: 0.001 * i, v: i });
    await until(() => pointers.at(-1)?.v === 49, 2000, "last pointer");
    expect(pointers.length).toBeLessThan(10);
    expect(pointers.at(-1)).toMatchObject({ userId: expertId, traceId: c.traceId, t: 0.049 });

    exp.s.emit("view:follow", { traceId: c.traceId, t0: 0.02, t1: 0.04 });
    await until(() => views.length > 0, 2000, "view");
    expect(views[0]).toMatchObject({ userId: expertId, role: "expert", traceId: c.traceId, t0: 0.02, t1: 0.04 });
    // a late joiner gets the current view in its join acknowledgement
    const late = await joined(techA, c.caseId);
    expect(late.ack.view).toMatchObject({ userId: expertId, t0: 0.02, t1: 0.04 });

    exp.s.disconnect();
    await until(() => pointers.at(-1)?.traceId === null, 2000, "pointer gone");
    await until(() => !presence.at(-1)!.participants.some((x) => x.userId === expertId), 2000, "expert left");
  });
});

describe("the handshake and the session", () => {
  it("refuses a foreign Origin at the handshake, and a handshake without a session", async () => {
    const evil = liveClient(server.url.replace("localhost", "127.0.0.1"), {
      cookie: techA.cookie,
      origin: "http://attacker.example",
    });
    open.push(evil);
    await expect(connected(evil)).rejects.toBeTruthy();
    expect(evil.connected).toBe(false);

    // RFC 6455 §10.2: a server may refuse a browser's handshake by its Origin. Engine.io answers the
    // HTTP handshake itself with 403 before opening a session.
    const status = (origin: string) =>
      new Promise<number>((resolve, reject) => {
        http
          .get(
            `http://127.0.0.1:${server.port}/socket.io/?EIO=4&transport=polling`,
            { headers: { origin, cookie: techA.cookie } },
            (res) => {
              res.resume();
              resolve(res.statusCode ?? 0);
            },
          )
          .on("error", reject);
      });
    expect(await status("http://attacker.example")).toBe(403);
    expect(await status(`http://127.0.0.1:${server.port}`)).toBe(200);

    const anonymous = liveClient(server.url.replace("localhost", "127.0.0.1"));
    open.push(anonymous);
    const err = await connected(anonymous).then(
      () => null,
      (e) => e,
    );
    expect(err?.message).toBe("unauthenticated");
  });

  it("drops a signed-out user's socket, and refuses it afterwards", async () => {
    const u = shopA.technicians[0];
    const agent = await signIn(server, u);
    const c = await newCase();
    const { s } = await joined(agent, c.caseId);
    const reasons: string[] = [];
    s.on("disconnect", (r) => reasons.push(r));
    const out = await agent.post("/api/auth/sign-out").send({});
    expect(out.status).toBe(200);
    await until(() => reasons.length > 0, 4000, "disconnect after sign-out");
    expect(reasons[0]).toBe("io server disconnect");
    const again = liveClient(server.url.replace("localhost", "127.0.0.1"), { cookie: agent.cookie });
    open.push(again);
    await expect(connected(again)).rejects.toThrow("unauthenticated");
  });

  it("drops the sockets of a user when access is lost (disconnectUser) and when the case moves to another expert", async () => {
    const c = await newCase();
    const exp = await joined(expert, c.caseId);
    const reasons: string[] = [];
    exp.s.on("disconnect", (r) => reasons.push(r));
    const other = await createExpert(server);
    await server.ctx.db.write((tx) =>
      tx
        .update(schema.caseTable)
        .set({ expertId: other.id })
        .where(and(eq(schema.caseTable.id, c.caseId)))
        .run(),
    );
    await until(() => reasons.length > 0, 4000, "disconnect after losing the case");
    expect(reasons[0]).toBe("io server disconnect");

    const tech = await joined(techA, c.caseId);
    const gone: string[] = [];
    tech.s.on("disconnect", (r) => gone.push(r));
    server.ctx.realtime.disconnectUser(shopA.technicians[0].id);
    await until(() => gone.length > 0, 2000, "disconnectUser");
  });

  it("drops a socket whose account gets an unknown role, as the HTTP API treats it as signed out", async () => {
    const agent = await signIn(server, shopB.owner);
    const s = await client(agent);
    const reasons: string[] = [];
    s.on("disconnect", (r) => reasons.push(r));
    await server.ctx.db.write((tx) =>
      tx.update(schema.user).set({ role: "superuser" }).where(eq(schema.user.id, shopB.owner.id)).run(),
    );
    try {
      await until(() => reasons.length > 0, 4000, "disconnect after the role change");
      expect(reasons[0]).toBe("io server disconnect");
    } finally {
      await server.ctx.db.write((tx) =>
        tx.update(schema.user).set({ role: "owner" }).where(eq(schema.user.id, shopB.owner.id)).run(),
      );
    }
  });

  it("a new upload by the tech reaches the expert in the room as case:updated (entity trace), its analysis stored", async () => {
    const c = await newCase();
    const exp = await joined(expert, c.caseId);
    const got: { entity: string; id: string }[] = [];
    exp.s.on("case:updated", (u) => got.push(u));
    // 2000 samples at 100 kS/s: one 8 V spike then a 1.5 V line (invented data, only its arrival matters)
    const lines = ["Time (s),Channel A (V)"];
    for (let i = 0; i < 2000; i++)
      lines.push(`${(i / 100_000).toFixed(6)},${i >= 500 && i < 502 ? 8 : i >= 502 && i < 650 ? 1.5 : 0}`);
    const up = await techA
      .post(`/api/cases/${c.caseId}/traces`)
      .field(
        "settings",
        JSON.stringify({ kind: "secondary-ignition", voltsPerDiv: 2, timePerDivS: 0.002, cylinder: 4 }),
      )
      .attach("file", Buffer.from(lines.join("\n") + "\n"), "cyl4-again.csv");
    expect(up.status).toBe(201);
    await until(() => got.some((u) => u.entity === "trace" && u.id === up.body.id), 3000, "case:updated for the trace");
    const row = (await server.ctx.db.read((tx) =>
      tx.select().from(schema.trace).where(eq(schema.trace.id, up.body.id)).get(),
    ))!;
    expect(row.caseId).toBe(c.caseId);
    expect(row.analysis).not.toBeNull(); // analysed before the commit that the event follows
  });

  it("pushes messages from other services to the case room (ctx.realtime.toCase)", async () => {
    const c = await newCase();
    const tech = await joined(techA, c.caseId);
    const got: unknown[] = [];
    tech.s.on("case:status", (p) => got.push(p));
    server.ctx.realtime.toCase(c.caseId, "case:status", { caseId: c.caseId, status: "needs_data" });
    await until(() => got.length === 1, 2000, "case:status");
    expect(got[0]).toEqual({ caseId: c.caseId, status: "needs_data" });
  });
});
