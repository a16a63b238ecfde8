/**
 * The load the live-review benches put on a room (bench/realtime.bench.ts, bench/nodes.bench.ts):
 * sequential round trips, and a sustained rate with the loss check. A rig is whatever relays an item
 * from its senders to CLIENTS receivers: the app's live layer, a bare socket.io relay, several nodes.
 */
import { until } from "../tests/integration/realtime-helpers";

export const CLIENTS = 50;
export const ROUND_TRIPS = 300;
export const WARMUP = 30;
export const SUSTAIN_MS = 3000;
export const IN_FLIGHT = 32;

export interface Rig {
  /** sends item i from sender (i mod senders) and calls back with its id on acknowledgement */
  send(i: number, onAck: (id: string) => void): void;
  /** how many senders the rig has (default 1) */
  senders?: number;
  /** receivers: called with (receiver index, id, seq) */
  onReceive(fn: (r: number, id: string, seq: number) => void): void;
  close(): Promise<void>;
}

/** Sequential round trips: time until the ack and all CLIENTS deliveries of one item are in. */
export async function roundTrips(rig: Rig, n: number, offset: number): Promise<number[]> {
  const times: number[] = [];
  let pending: { id: string | null; got: number; acked: boolean; done: () => void } | null = null;
  const early = new Map<string, number>();
  rig.onReceive((_r, id) => {
    if (pending && pending.id === id) {
      pending.got += 1;
      if (pending.got === CLIENTS && pending.acked) pending.done();
    } else early.set(id, (early.get(id) ?? 0) + 1); // delivered before the ack came back
  });
  for (let i = 0; i < n; i++) {
    await new Promise<void>((resolve) => {
      const t0 = performance.now();
      const done = () => {
        times.push(performance.now() - t0);
        pending = null;
        resolve();
      };
      pending = { id: null, got: 0, acked: false, done };
      // one sender for the round trips (the rig's first), so every item has the same path
      rig.send((offset + i) * (rig.senders ?? 1), (id) => {
        const p = pending!;
        p.id = id;
        p.acked = true;
        p.got += early.get(id) ?? 0;
        early.delete(id);
        if (p.got === CLIENTS) p.done();
      });
    });
  }
  return times;
}

export interface Sustained {
  /** items acknowledged and delivered to every receiver, per second */
  rate: number;
  acked: number;
  /** over all receivers: acknowledged items a receiver never got, got twice, got after a later seq */
  lost: number;
  duplicates: number;
  outOfOrder: number;
}

/** Keeps IN_FLIGHT sends outstanding (spread over the senders) for SUSTAIN_MS; then the loss check. */
export async function sustained(rig: Rig): Promise<Sustained> {
  const perClient = Array.from({ length: CLIENTS }, () => ({
    ids: new Set<string>(),
    dup: 0,
    lastSeq: 0,
    disorder: 0,
  }));
  let delivered = 0;
  let lastDelivery = 0;
  rig.onReceive((r, id, seq) => {
    const c = perClient[r];
    if (c.ids.has(id)) c.dup += 1;
    else c.ids.add(id);
    if (seq <= c.lastSeq) c.disorder += 1;
    c.lastSeq = seq;
    delivered += 1;
    lastDelivery = performance.now();
  });
  const ackedIds: string[] = [];
  const start = performance.now();
  let sent = 0;
  await new Promise<void>((resolve) => {
    let inFlight = 0;
    const pump = () => {
      while (inFlight < IN_FLIGHT && performance.now() - start < SUSTAIN_MS) {
        inFlight += 1;
        rig.send(sent++, (id) => {
          inFlight -= 1;
          ackedIds.push(id);
          pump();
        });
      }
      if (inFlight === 0) resolve();
    };
    pump();
  });
  await until(() => delivered >= ackedIds.length * CLIENTS, 60_000, "deliveries of the sustained run");
  const elapsed = Math.max(lastDelivery, performance.now()) - start;
  // late duplicates would come now
  await new Promise((r) => setTimeout(r, 300));
  let lost = 0;
  let duplicates = 0;
  let outOfOrder = 0;
  for (const c of perClient) {
    for (const id of ackedIds) if (!c.ids.has(id)) lost += 1;
    duplicates += c.dup;
    outOfOrder += c.disorder;
  }
  return { rate: (ackedIds.length / elapsed) * 1000, acked: ackedIds.length, lost, duplicates, outOfOrder };
}
