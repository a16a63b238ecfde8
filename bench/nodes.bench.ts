/**
 * Live review on several nodes, on loopback: two app nodes (each its own process, as `npm run
 * cluster` runs them) sharing a real libSQL server (sqld) and a real Redis (the socket.io Redis
 * streams adapter), the bench's clients in this process.
 * - annotation round trip to 50 clients spread over the two nodes (25 on each, the sender on node
 *   1): from `annotation:create` leaving the sender until the stored record (committed on the
 *   libSQL server with its seq) has reached all 50 clients and the sender's acknowledgement is
 *   back; median and p99 over 300 sequential marks. Baseline, same run, same servers: the same with
 *   the sender and all 50 clients on node 1 (what the second node and Redis between them cost).
 * - sustained rate with no loss: a sender on each node keeps 16 creates in flight for 3 s (32 in
 *   all); the rate counts marks acknowledged and delivered to all 50 clients, and the run checks
 *   that each client got every one exactly once, in seq order, and that the database holds the
 *   same number. Baseline: the same load with everyone on node 1.
 * - for scale, the one-node figures are also set against the default mode (one process, the
 *   embedded SQLite file, in-process adapter) measured in the same run.
 * Skipped, with the reason, when sqld or redis-server is missing (README "Several nodes").
 */
import { sql, eq } from "drizzle-orm";
import { median, percentile, type BenchResult } from "./types";
import {
  CLIENTS,
  ROUND_TRIPS,
  WARMUP,
  roundTrips,
  sustained as sustainedLoad,
  type Rig as LoadRig,
  type Sustained as Load,
} from "./live-load";
import { nodesMissing, startNodes, type NodeRig } from "../tests/helpers/nodes";
import { startTestServer, type TestServer } from "../tests/helpers/test-app";
import { createExpert, createShopTeam, signIn, type SignedInAgent } from "../tests/factories";
import {
  insertLiveCase,
  liveClient,
  connected,
  ask,
  type LiveCase,
  type LiveClient,
} from "../tests/integration/realtime-helpers";
import { schema, type Db } from "../server/db/client";
import type { AnnotationRecord } from "../shared/realtime";

/** The app's live layer, one case: `count` is the marks the database holds for it. */
interface Rig extends LoadRig {
  count(): Promise<number>;
}

interface Place {
  db: Db;
  /** the node each client connects to, by index */
  urls: string[];
  origin: string;
  tech: SignedInAgent;
  expert: SignedInAgent;
  newCase(): Promise<LiveCase>;
}

/** A fresh case, `senders` senders and CLIENTS receivers, client k on `place.urls[k % urls.length]`. */
async function rigOn(place: Place, opts: { senders: number; spread: boolean }): Promise<Rig> {
  const c = await place.newCase();
  const urlFor = (k: number) => (opts.spread ? place.urls[k % place.urls.length] : place.urls[0]);
  const join = async (k: number, cookie: string) => {
    const s = await connected(liveClient(urlFor(k), { cookie, origin: place.origin }));
    // a generous bound: a join on a loaded machine (the figures are the round trips, not joins)
    const ack = await ask(s, "case:join", { caseId: c.caseId }, 60_000);
    if (!ack.ok) throw new Error(JSON.stringify(ack));
    return s;
  };
  const senders: LiveClient[] = [];
  for (let k = 0; k < opts.senders; k++) senders.push(await join(k, place.expert.cookie));
  const receivers: LiveClient[] = [];
  for (let k = 0; k < CLIENTS; k++) receivers.push(await join(k, k % 2 ? place.expert.cookie : place.tech.cookie));
  return {
    senders: senders.length,
    send(i, onAck) {
      const t0 = ((i % 1000) + 1) * 1e-4;
      const mark = { traceId: c.traceId, kind: "pin" as const, t0, level: 12.5, label: `m${i}` };
      senders[i % senders.length].emit("annotation:create", mark, (r) => {
        if (!r.ok) throw new Error(JSON.stringify(r));
        onAck(r.annotation.id);
      });
    },
    onReceive(fn) {
      receivers.forEach((s, r) => s.on("annotation:created", (a: AnnotationRecord) => fn(r, a.id, a.seq)));
    },
    async count() {
      const row = await place.db.read((tx) =>
        tx
          .select({ n: sql<number>`count(*)` })
          .from(schema.annotation)
          .where(eq(schema.annotation.caseId, c.caseId))
          .get(),
      );
      return Number(row!.n);
    },
    async close() {
      for (const s of [...senders, ...receivers]) s.disconnect();
    },
  };
}

interface Sustained extends Load {
  stored: number;
}

async function sustained(rig: Rig): Promise<Sustained> {
  const load = await sustainedLoad(rig);
  return { ...load, stored: await rig.count() };
}

async function measure(place: Place, spread: boolean): Promise<{ times: number[]; sus: Sustained }> {
  const rt = await rigOn(place, { senders: 1, spread });
  await roundTrips(rt, WARMUP, 0);
  const times = await roundTrips(rt, ROUND_TRIPS, WARMUP);
  await rt.close();
  const sr = await rigOn(place, { senders: spread ? place.urls.length : 1, spread });
  const sus = await sustained(sr);
  await sr.close();
  return { times, sus };
}

async function clusterPlace(rig: NodeRig): Promise<Place> {
  const team = await createShopTeam(rig.ctx);
  const e = await createExpert(rig.ctx);
  return {
    db: rig.db,
    urls: rig.nodes.map((n) => n.url),
    origin: rig.front,
    tech: await signIn(rig.nodes[0], team.technicians[0]),
    expert: await signIn(rig.nodes[1], e),
    newCase: () => insertLiveCase(rig.ctx, { shopId: team.shop.id, createdBy: team.technicians[0].id, expertId: e.id }),
  };
}

async function filePlace(server: TestServer): Promise<Place> {
  const team = await createShopTeam(server);
  const e = await createExpert(server);
  const url = `http://127.0.0.1:${server.port}`;
  return {
    db: server.ctx.db,
    urls: [url],
    origin: url,
    tech: await signIn(server, team.technicians[0]),
    expert: await signIn(server, e),
    newCase: () =>
      insertLiveCase(server.ctx, { shopId: team.shop.id, createdBy: team.technicians[0].id, expertId: e.id }),
  };
}

const lossFree = (s: Sustained) => s.lost === 0 && s.duplicates === 0 && s.outOfOrder === 0 && s.stored === s.acked;
const tally = (s: Sustained) =>
  `${s.acked} stored ${s.stored}; lost ${s.lost}, duplicated ${s.duplicates}, out of order ${s.outOfOrder}`;

export default async function bench(): Promise<BenchResult[]> {
  const missing = nodesMissing();
  if (missing) {
    console.log(`  skipped: missing ${missing}`);
    return [];
  }
  // the default mode (TEST_DATABASE unset: the SQLite file)
  const server = await startTestServer();
  let embedded: { times: number[]; sus: Sustained };
  try {
    embedded = await measure(await filePlace(server), false);
  } finally {
    await server.close();
  }

  const rig = await startNodes(2);
  let one: { times: number[]; sus: Sustained };
  let two: { times: number[]; sus: Sustained };
  try {
    const place = await clusterPlace(rig);
    one = await measure(place, false);
    two = await measure(place, true);
  } finally {
    await rig.close();
  }

  const [fileMed, fileP99] = [median(embedded.times), percentile(embedded.times, 99)];
  const [oneMed, oneP99] = [median(one.times), percentile(one.times, 99)];
  const [twoMed, twoP99] = [median(two.times), percentile(two.times, 99)];
  const rt = `annotation round trip to ${CLIENTS} clients (commit included)`;
  return [
    { name: `${rt}, one process on the SQLite file, p99`, value: fileP99, unit: "ms" },
    {
      name: `${rt}, all on node 1 of the cluster (libSQL server, Redis), median`,
      value: oneMed,
      unit: "ms",
      baseline: "one process on the SQLite file, median",
      ratio: oneMed / fileMed,
    },
    {
      name: `${rt}, all on node 1 of the cluster, p99`,
      value: oneP99,
      unit: "ms",
      baseline: "one process on the SQLite file, p99",
      ratio: oneP99 / fileP99,
    },
    {
      name: `${rt}, spread over two nodes, median`,
      value: twoMed,
      unit: "ms",
      baseline: "all on one node, median",
      ratio: twoMed / oneMed,
    },
    {
      name: `${rt}, spread over two nodes, p99`,
      value: twoP99,
      unit: "ms",
      baseline: "all on one node, p99",
      ratio: twoP99 / oneP99,
    },
    {
      name: `annotations sustained to ${CLIENTS} clients, one process on the SQLite file (${tally(embedded.sus)})`,
      value: embedded.sus.rate,
      unit: "annotations/s",
      goal: "no loss, no duplicate, in seq order, all stored",
      pass: lossFree(embedded.sus),
    },
    {
      name: `annotations sustained to ${CLIENTS} clients, all on node 1 (${tally(one.sus)})`,
      value: one.sus.rate,
      unit: "annotations/s",
      baseline: "one process on the SQLite file",
      ratio: one.sus.rate / embedded.sus.rate,
      goal: "no loss, no duplicate, in seq order, all stored",
      pass: lossFree(one.sus),
    },
    {
      name: `annotations sustained to ${CLIENTS} clients, senders and clients on two nodes (${tally(two.sus)})`,
      value: two.sus.rate,
      unit: "annotations/s",
      baseline: "all on one node",
      ratio: two.sus.rate / one.sus.rate,
      goal: "no loss, no duplicate, in seq order, all stored",
      pass: lossFree(two.sus),
    },
  ];
}
