/**
 * Live review figures, on loopback, server and clients in this process:
 * - annotation round trip to 50 clients in one room: from `annotation:create` leaving the sender
 *   until the stored record (committed with its seq, synchronous=FULL) has reached all 50 other
 *   clients and the sender's acknowledgement is back; median and p99 over 300 sequential marks
 *   (goal p99 < 25 ms). Baseline: a bare socket.io relay (ack + broadcast to 50 clients, no auth,
 *   no database) measured the same way in the same run.
 * - sustained annotation rate with no loss: one sender keeps 32 creates in flight for 3 s; the rate
 *   counts marks acknowledged and delivered to all 50 clients, and the run checks each client got
 *   every one exactly once, in seq order, and that the database holds the same number. Baseline: the
 *   bare relay under the same load.
 */
import http from "node:http";
import { Server } from "socket.io";
import { io as connectClient, type Socket } from "socket.io-client";
import { sql, eq } from "drizzle-orm";
import { median, percentile, type BenchResult } from "./types";
import { CLIENTS, ROUND_TRIPS, WARMUP, roundTrips, sustained, type Rig } from "./live-load";
import { startTestServer } from "../tests/helpers/test-app";
import { createExpert, createShopTeam, signIn } from "../tests/factories";
import { insertLiveCase, liveClient, connected, ask, type LiveClient } from "../tests/integration/realtime-helpers";
import { schema } from "../server/db/client";
import type { AnnotationRecord } from "../shared/realtime";

async function liveRig(): Promise<Rig & { count(): Promise<number> }> {
  const server = await startTestServer();
  const team = await createShopTeam(server);
  const e = await createExpert(server);
  const tech = await signIn(server, team.technicians[0]);
  const expert = await signIn(server, e);
  const c = await insertLiveCase(server.ctx, {
    shopId: team.shop.id,
    createdBy: team.technicians[0].id,
    expertId: e.id,
  });
  const url = `http://127.0.0.1:${server.port}`;
  const join = async (cookie: string) => {
    const s = await connected(liveClient(url, { cookie }));
    const ack = await ask(s, "case:join", { caseId: c.caseId });
    if (!ack.ok) throw new Error(JSON.stringify(ack));
    return s;
  };
  const sender = await join(expert.cookie);
  const receivers: LiveClient[] = [];
  for (let i = 0; i < CLIENTS; i++) receivers.push(await join(i % 2 ? expert.cookie : tech.cookie));
  return {
    send(i, onAck) {
      sender.emit(
        "annotation:create",
        { traceId: c.traceId, kind: "pin", t0: ((i % 1000) + 1) * 1e-4, level: 12.5, label: `m${i}` },
        (r) => {
          if (!r.ok) throw new Error(JSON.stringify(r));
          onAck(r.annotation.id);
        },
      );
    },
    onReceive(fn) {
      receivers.forEach((s, r) => s.on("annotation:created", (a: AnnotationRecord) => fn(r, a.id, a.seq)));
    },
    count: async () =>
      Number(
        (await server.ctx.db.read((tx) =>
          tx
            .select({ n: sql<number>`count(*)` })
            .from(schema.annotation)
            .where(eq(schema.annotation.caseId, c.caseId))
            .get(),
        ))!.n,
      ),
    async close() {
      for (const s of [sender, ...receivers]) s.disconnect();
      await server.close();
    },
  };
}

/** The baseline: socket.io relaying a payload of the same shape to a room, nothing else. */
async function bareRig(): Promise<Rig> {
  const httpServer = http.createServer();
  const io = new Server(httpServer, { serveClient: false });
  let seq = 0;
  io.on("connection", (s) => {
    void s.join("room");
    s.on("relay", (p: Record<string, unknown>, ack: (r: unknown) => void) => {
      const rec = { ...p, id: crypto.randomUUID(), seq: ++seq };
      s.to("room").emit("relayed", rec);
      ack({ ok: true, annotation: rec });
    });
  });
  await new Promise<void>((r) => httpServer.listen(0, "127.0.0.1", r));
  const url = `http://127.0.0.1:${(httpServer.address() as { port: number }).port}`;
  const mk = async () => {
    const s: Socket = connectClient(url, { transports: ["websocket"], forceNew: true });
    await new Promise<void>((r) => s.once("connect", () => r()));
    return s;
  };
  const sender = await mk();
  const receivers: Socket[] = [];
  for (let i = 0; i < CLIENTS; i++) receivers.push(await mk());
  await new Promise((r) => setTimeout(r, 50));
  return {
    send(i, onAck) {
      sender.emit(
        "relay",
        { traceId: "t", kind: "pin", t0: ((i % 1000) + 1) * 1e-4, level: 12.5, label: `m${i}` },
        (r: { annotation: { id: string } }) => onAck(r.annotation.id),
      );
    },
    onReceive(fn) {
      receivers.forEach((s, r) => s.on("relayed", (a: { id: string; seq: number }) => fn(r, a.id, a.seq)));
    },
    async close() {
      for (const s of [sender, ...receivers]) s.disconnect();
      io.disconnectSockets(true);
      io.engine.close();
      await new Promise<void>((r) => httpServer.close(() => r()));
    },
  };
}

export default async function bench(): Promise<BenchResult[]> {
  const bare = await bareRig();
  await roundTrips(bare, WARMUP, 0);
  const bareTimes = await roundTrips(bare, ROUND_TRIPS, WARMUP);
  await bare.close();
  const bareSus = await (async () => {
    const r = await bareRig();
    const out = await sustained(r);
    await r.close();
    return out;
  })();

  const live = await liveRig();
  await roundTrips(live, WARMUP, 0);
  const liveTimes = await roundTrips(live, ROUND_TRIPS, WARMUP);
  await live.close();

  const liveSusRig = await liveRig();
  const liveSus = await sustained(liveSusRig);
  const stored = await liveSusRig.count();
  await liveSusRig.close();

  const bareMed = median(bareTimes);
  const bareP99 = percentile(bareTimes, 99);
  const med = median(liveTimes);
  const p99 = percentile(liveTimes, 99);
  const lossFree =
    liveSus.lost === 0 && liveSus.duplicates === 0 && liveSus.outOfOrder === 0 && stored === liveSus.acked;
  return [
    { name: `bare socket.io relay to ${CLIENTS} clients, median`, value: bareMed, unit: "ms" },
    { name: `bare socket.io relay to ${CLIENTS} clients, p99`, value: bareP99, unit: "ms" },
    {
      name: `annotation round trip to ${CLIENTS} clients (commit included), median`,
      value: med,
      unit: "ms",
      baseline: "bare socket.io relay median",
      ratio: med / bareMed,
    },
    {
      name: `annotation round trip to ${CLIENTS} clients (commit included), p99`,
      value: p99,
      unit: "ms",
      baseline: "bare socket.io relay p99",
      ratio: p99 / bareP99,
      goal: "p99 < 25 ms",
      pass: p99 < 25,
    },
    { name: `bare socket.io relay, sustained to ${CLIENTS} clients`, value: bareSus.rate, unit: "items/s" },
    {
      name: `annotations sustained to ${CLIENTS} clients (${liveSus.acked} stored; lost ${liveSus.lost}, duplicated ${liveSus.duplicates}, out of order ${liveSus.outOfOrder})`,
      value: liveSus.rate,
      unit: "annotations/s",
      baseline: "bare socket.io relay sustained",
      ratio: liveSus.rate / bareSus.rate,
      goal: "no loss, no duplicate, in seq order, all stored",
      pass: lossFree,
    },
  ];
}
