import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createExpert, createShopTeam, signIn, type ShopTeam, type SignedInAgent } from "../factories";
import { schema, type Db } from "../../server/db/client";
import type { UnitBody } from "../../server/db/unit-of-work";
import type { RealtimeServer } from "../../server/realtime/index";
import { sweepSockets } from "../../server/realtime/sweep";
import { ask, connected, insertLiveCase, liveClient, sleep, type LiveClient } from "./realtime-helpers";

/**
 * The sweep that drops silent sockets, against the documented contract (docs/api.md, "Live
 * review"): a socket whose session ends or whose case is no longer readable is disconnected; a
 * `case:join` is answered. The sweep's read is a round trip that a joining socket can overtake (on a
 * libSQL server under load it takes hundreds of milliseconds): the join here is made, acknowledged,
 * while the sweep's read is open, deterministically, by running it inside the sweep's own read.
 */

let server: TestServer;
let shop: ShopTeam;
let tech: SignedInAgent;
let expert: SignedInAgent;
let expertId: string;
const open: LiveClient[] = [];

const io = () => (server.ctx.realtime as RealtimeServer).io;

async function client(agent: SignedInAgent): Promise<LiveClient> {
  const s = liveClient(server.url.replace("localhost", "127.0.0.1"), { cookie: agent.cookie });
  open.push(s);
  return connected(s);
}

/** The sweep, with `during` run (and awaited) after its read and before it judges the sockets. */
async function sweepWhile(during: () => Promise<void>): Promise<void> {
  const db: Db = server.ctx.db;
  async function read<T>(body: UnitBody<T>): Promise<Awaited<T>> {
    const out = await db.read(body);
    await during();
    return out;
  }
  const slowDb: Db = { ...db, read };
  await sweepSockets({ ctx: { ...server.ctx, db: slowDb }, io: io() });
}

/** Disconnected by the server (not only not yet told): its socket is gone from the node. */
async function dropped(s: LiveClient): Promise<boolean> {
  await sleep(100);
  return (
    !io()
      .of("/")
      .sockets.has(s.id ?? "") || !s.connected
  );
}

const newCase = () => insertLiveCase(server.ctx, { shopId: shop.shop.id, createdBy: shop.technicians[0].id, expertId });

async function join(s: LiveClient, caseId: string) {
  const ack = await ask(s, "case:join", { caseId });
  expect(ack).toMatchObject({ ok: true, caseId });
}

beforeAll(async () => {
  server = await startTestServer();
  shop = await createShopTeam(server);
  tech = await signIn(server, shop.technicians[0]);
  const e = await createExpert(server);
  expertId = e.id;
  expert = await signIn(server, e);
});
afterEach(() => {
  while (open.length) open.pop()!.disconnect();
});
afterAll(async () => {
  await server?.close();
});

describe("the sweep of silent sockets", () => {
  it("keeps a socket that joins a case while the sweep reads, and the join is answered", async () => {
    const c = await newCase();
    const s = await client(tech);
    await sweepWhile(() => join(s, c.caseId));
    expect(await dropped(s)).toBe(false);
    // still in the room: a mark is stored and acknowledged
    const mark = await ask(s, "annotation:create", { traceId: c.traceId, kind: "pin", t0: 0.01 });
    expect(mark).toMatchObject({ ok: true });
  });

  it("keeps a socket that moves from a case it lost to one it may read while the sweep reads", async () => {
    const lost = await newCase();
    const kept = await newCase();
    const s = await client(expert);
    await join(s, lost.caseId);
    const other = await createExpert(server);
    await sweepWhile(async () => {
      await server.ctx.db.write((tx) =>
        tx.update(schema.caseTable).set({ expertId: other.id }).where(eq(schema.caseTable.id, lost.caseId)).run(),
      );
      await join(s, kept.caseId);
    });
    expect(await dropped(s)).toBe(false);
  });

  it("drops a socket that stays in a case its user can no longer read, and one whose session is gone", async () => {
    const c = await newCase();
    const exp = await client(expert);
    await join(exp, c.caseId);
    const other = await createExpert(server);
    await server.ctx.db.write((tx) =>
      tx.update(schema.caseTable).set({ expertId: other.id }).where(eq(schema.caseTable.id, c.caseId)).run(),
    );
    const agent = await signIn(server, shop.owner);
    const owner = await client(agent);
    await server.ctx.db.write((tx) => tx.delete(schema.session).where(eq(schema.session.userId, shop.owner.id)).run());
    await sweepWhile(async () => {});
    expect(await dropped(exp)).toBe(true);
    expect(await dropped(owner)).toBe(true);
  });
});
