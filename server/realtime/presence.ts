/**
 * Who is in each case's room, who is typing, and the latest shared view window — for one node (in
 * memory, server/services/presence.ts) or for every node together (in Redis). The live handlers
 * call the same asynchronous interface either way; after a change the room gets the new snapshot:
 * on one node at once, on several through a Redis message that makes every node read the snapshot
 * and send it to its own sockets in the room.
 *
 * Redis layout, per case: `bl:presence:<case>` a hash of the sockets in the room
 * (`<node>|<socket>` → the participant), `bl:typing:<case>` a hash user → typing until (ms),
 * `bl:view:<case>` the last shared window; `bl:rooms` the cases with anyone in them; `bl:node:<id>`
 * a heartbeat key per node (expires 15 s after its node stops renewing it). Sockets of a node whose
 * heartbeat has expired (killed, not stopped) are not counted and are removed by the next reap.
 */
import type { Redis } from "ioredis";
import type { Logger } from "pino";
import type { Role } from "../../shared/domain/case-status";
import { TYPING_TIMEOUT_MS, type Participant, type PresencePayload, type ViewPayload } from "../../shared/realtime";
import { PresenceRegistry, type PresenceMember } from "../services/presence";
import type { SharedRedis } from "../cluster/redis";

export type { PresenceMember };

export interface Presence {
  /** a socket enters a case's room */
  join(caseId: string, socketId: string, m: PresenceMember): Promise<void>;
  /** a socket leaves; `userLeft` when it was the user's last one in the room (on any node) */
  leave(caseId: string, socketId: string, userId: string): Promise<{ userLeft: boolean }>;
  /** sets a user's typing flag (it clears itself after TYPING_TIMEOUT_MS) */
  setTyping(caseId: string, userId: string, typing: boolean): Promise<void>;
  snapshot(caseId: string): Promise<PresencePayload>;
  setView(v: ViewPayload): Promise<void>;
  view(caseId: string): Promise<ViewPayload | null>;
  /** the users in the room right now */
  users(caseId: string): Promise<string[]>;
  close(): Promise<void>;
}

/** Sends a room's snapshot to this node's sockets in it. */
export type EmitPresence = (caseId: string, snapshot: PresencePayload) => void;

/** One node: the in-memory registry; every change is sent to the room at once. */
export function localPresence(emit: EmitPresence): Presence {
  const reg: PresenceRegistry = new PresenceRegistry((caseId) => emit(caseId, reg.snapshot(caseId)));
  const send = (caseId: string) => emit(caseId, reg.snapshot(caseId));
  return {
    async join(caseId, socketId, m) {
      reg.join(caseId, socketId, m);
      send(caseId);
    },
    async leave(caseId, socketId, userId) {
      const { changed, userLeft } = reg.leave(caseId, socketId, userId);
      if (changed) send(caseId);
      return { userLeft };
    },
    async setTyping(caseId, userId, typing) {
      if (reg.setTyping(caseId, userId, typing)) send(caseId);
    },
    snapshot: async (caseId) => reg.snapshot(caseId),
    setView: async (v) => reg.setView(v),
    view: async (caseId) => reg.view(caseId),
    users: async (caseId) => reg.snapshot(caseId).participants.map((p) => p.userId),
    close: async () => reg.clear(),
  };
}

const HEARTBEAT_MS = 5000;
const NODE_TTL_MS = 15_000;
const CHANNEL = "bl:presence:changed";
const k = {
  sockets: (caseId: string) => `bl:presence:${caseId}`,
  typing: (caseId: string) => `bl:typing:${caseId}`,
  view: (caseId: string) => `bl:view:${caseId}`,
  rooms: "bl:rooms",
  node: (id: string) => `bl:node:${id}`,
};

interface Entry extends PresenceMember {
  node: string;
  socket: string;
}

/** One participant per person (their sockets counted), typing while their typing mark is ahead of now. */
function participantsOf(list: Entry[], typing: Record<string, string>, now: number): Participant[] {
  const users = new Map<string, Participant>();
  for (const e of list) {
    const p = users.get(e.userId);
    if (p) p.connections++;
    else
      users.set(e.userId, {
        userId: e.userId,
        name: e.name,
        role: e.role as Role,
        color: e.color,
        typing: Number(typing[e.userId] ?? 0) > now,
        connections: 1,
      });
  }
  const participants = [...users.values()];
  participants.sort((a, b) => (a.role === b.role ? a.name.localeCompare(b.name) : a.role < b.role ? -1 : 1));
  return participants;
}

/** Several nodes: presence kept in Redis, changes announced to every node. */
export async function redisPresence(redis: SharedRedis, emit: EmitPresence, logger: Logger): Promise<Presence> {
  const r: Redis = redis.client;
  const me = redis.nodeId;
  const sub = redis.connection();
  const typingTimers = new Map<string, NodeJS.Timeout>();
  const pending = new Map<string, Promise<void>>();
  let alive: { at: number; nodes: Set<string> } = { at: 0, nodes: new Set() };

  const beat = () => r.set(k.node(me), "1", "PX", NODE_TTL_MS);
  await beat();
  const heartbeat = setInterval(() => {
    beat().catch((err) => logger.warn({ err: err.message }, "presence heartbeat failed"));
    reap().catch((err) => logger.warn({ err: err.message }, "presence reap failed"));
  }, HEARTBEAT_MS);
  heartbeat.unref();

  /** The nodes whose heartbeat is current (read at most once a second). */
  async function aliveNodes(ids: string[]): Promise<Set<string>> {
    const unknown = ids.filter((id) => !alive.nodes.has(id));
    if (Date.now() - alive.at < 1000 && unknown.length === 0) return alive.nodes;
    const all = [...new Set([...alive.nodes, ...ids])];
    const found = await Promise.all(all.map((id) => r.exists(k.node(id))));
    alive = { at: Date.now(), nodes: new Set(all.filter((_, i) => found[i] === 1)) };
    return alive.nodes;
  }

  async function entries(caseId: string): Promise<Entry[]> {
    const raw = await r.hgetall(k.sockets(caseId));
    const list = Object.entries(raw).map(([field, json]) => {
      const [node, socket] = field.split("|");
      return { ...(JSON.parse(json) as PresenceMember), node, socket };
    });
    const live = await aliveNodes([...new Set(list.map((e) => e.node))]);
    return list.filter((e) => live.has(e.node));
  }

  async function snapshot(caseId: string): Promise<PresencePayload> {
    const [list, typing] = await Promise.all([entries(caseId), r.hgetall(k.typing(caseId))]);
    return { caseId, participants: participantsOf(list, typing, Date.now()) };
  }

  /** Every node (this one included) sends the room's new snapshot to its sockets. */
  const announce = (caseId: string) => r.publish(CHANNEL, caseId);

  await sub.subscribe(CHANNEL);
  sub.on("message", (_channel: string, caseId: string) => {
    // one read per room at a time; a change during the read is read again after it
    const prev = pending.get(caseId) ?? Promise.resolve();
    const next = prev
      .then(() => snapshot(caseId))
      .then((s) => emit(caseId, s))
      .catch((err) => logger.warn({ err: err.message }, "presence snapshot failed"));
    pending.set(caseId, next);
    void next.finally(() => pending.get(caseId) === next && pending.delete(caseId));
  });

  /** Removes the sockets of nodes that stopped without leaving (killed); announces the rooms changed. */
  async function reap(): Promise<void> {
    for (const caseId of await r.smembers(k.rooms)) {
      const raw = await r.hgetall(k.sockets(caseId));
      const fields = Object.keys(raw);
      if (fields.length === 0) {
        await r.srem(k.rooms, caseId);
        continue;
      }
      const nodes = [...new Set(fields.map((f) => f.split("|")[0]))];
      const states = await Promise.all(nodes.map((id) => r.exists(k.node(id))));
      const dead = new Set(nodes.filter((_, i) => states[i] === 0));
      const gone = fields.filter((f) => dead.has(f.split("|")[0]));
      if (gone.length) {
        await r.hdel(k.sockets(caseId), ...gone);
        await announce(caseId);
      }
    }
  }

  async function userStillIn(caseId: string, userId: string): Promise<boolean> {
    return (await entries(caseId)).some((e) => e.userId === userId);
  }

  return {
    async join(caseId, socketId, m) {
      await r.multi().hset(k.sockets(caseId), `${me}|${socketId}`, JSON.stringify(m)).sadd(k.rooms, caseId).exec();
      await announce(caseId);
    },
    async leave(caseId, socketId, userId) {
      const removed = await r.hdel(k.sockets(caseId), `${me}|${socketId}`);
      if (!removed) return { userLeft: false };
      const userLeft = !(await userStillIn(caseId, userId));
      if (userLeft) await r.hdel(k.typing(caseId), userId);
      if ((await r.hlen(k.sockets(caseId))) === 0)
        await r.multi().del(k.view(caseId), k.typing(caseId)).srem(k.rooms, caseId).exec();
      await announce(caseId);
      return { userLeft };
    },
    async setTyping(caseId, userId, typing) {
      const key = `${caseId}|${userId}`;
      const t = typingTimers.get(key);
      if (t) clearTimeout(t);
      typingTimers.delete(key);
      const was = Number((await r.hget(k.typing(caseId), userId)) ?? 0) > Date.now();
      if (typing) {
        await r.hset(k.typing(caseId), userId, String(Date.now() + TYPING_TIMEOUT_MS));
        const timer = setTimeout(() => {
          typingTimers.delete(key);
          void announce(caseId).catch(() => {});
        }, TYPING_TIMEOUT_MS + 50);
        timer.unref();
        typingTimers.set(key, timer);
      } else await r.hdel(k.typing(caseId), userId);
      if (was !== typing) await announce(caseId);
    },
    snapshot,
    async setView(v) {
      if ((await r.hlen(k.sockets(v.caseId))) > 0)
        await r.set(k.view(v.caseId), JSON.stringify(v), "PX", 24 * 3600_000);
    },
    async view(caseId) {
      const raw = await r.get(k.view(caseId));
      return raw ? (JSON.parse(raw) as ViewPayload) : null;
    },
    users: async (caseId) => [...new Set((await entries(caseId)).map((e) => e.userId))],
    async close() {
      clearInterval(heartbeat);
      for (const t of typingTimers.values()) clearTimeout(t);
      // this node's sockets leave every room it had them in
      for (const caseId of await r.smembers(k.rooms).catch(() => [] as string[])) {
        const mine = Object.keys(await r.hgetall(k.sockets(caseId))).filter((f) => f.startsWith(`${me}|`));
        if (mine.length) {
          await r.hdel(k.sockets(caseId), ...mine);
          await announce(caseId);
        }
      }
      await r.del(k.node(me));
      await sub.unsubscribe(CHANNEL).catch(() => {});
    },
  };
}
