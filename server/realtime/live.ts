/**
 * What every live-review handler shares: the socket.io server, presence, the group commit, the
 * delivery of stored records, and the helpers that check the actor and the joined case and answer
 * acknowledgements. A write re-reads the session and the case (one read of the database, before
 * its plan goes into the group commit, whose guard checks them again at the commit); the ephemeral
 * events (pointer, view, typing) use a check at most `QUIET_CHECK_MS` old.
 */
import type { z } from "zod";
import { eq } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Statement, type Tx } from "../db/client";
import { HttpError, notFound, unauthorized } from "../http/errors";
import { canJoinCase } from "../auth/policies/live";
import type { CaseFacts } from "../workflow/policy";
import type { LiveHappening } from "../workflow/live-notices";
import { liveNoticeSender } from "./notices";
import { casePolicyQuery, type LiveActor } from "../services/annotations";
import type { Presence } from "./presence";
import type { GroupCommit } from "./group-commit";
import type { LiveDelivery, LiveRecord } from "./delivery";
import type { WritePlan } from "./writes";
import { actorOfRows, sessionUserQuery } from "./session";
import type { pointerMoveSchema, viewFollowSchema } from "../../shared/schemas/realtime";
import { POINTER_RATE_HZ, type EventError } from "../../shared/realtime";
import type { LiveServer, LiveSocket, SocketData } from "./types";

export interface Throttle<P> {
  last: number;
  timer: ReturnType<typeof setTimeout> | null;
  pending: P | null;
}

/** Per-socket state that stays on this node (timers are not data to share). */
export interface SocketLocal {
  pointer: Throttle<z.infer<typeof pointerMoveSchema>>;
  view: Throttle<z.infer<typeof viewFollowSchema>>;
  /** the last check of the actor and the joined case (for the ephemeral events) */
  checked: { at: number; actor: LiveActor; c: CaseFacts } | null;
  /** the check in flight for the ephemeral events, shared by those that arrive meanwhile */
  checking?: { caseId: string; p: Promise<Checked> } | null;
}

export type { LiveServer, LiveSocket, SocketData };

/** How old a check of the actor and the case may be for pointer, view and typing events. */
export const QUIET_CHECK_MS = 1000;

export function eventError(err: unknown, ctx: AppContext, event: string): EventError {
  if (err instanceof HttpError)
    return { code: err.code, message: err.message, ...(err.details !== undefined ? { details: err.details } : {}) };
  ctx.logger.error({ err, event }, "realtime event failed");
  return { code: "internal", message: "Something went wrong on the server; nothing was saved. Try again." };
}

const notJoined = () => new HttpError(409, "not_joined", "Join the case first (case:join).");

/** A write as a handler prepares it: its plan, and the acknowledgement's body once stored. */
export interface PreparedWrite<W extends { changed: boolean }, A extends object> {
  plan: WritePlan<W>;
  /** the stored record, for the room (and the other nodes) */
  record(w: W): LiveRecord;
  answer(w: W): A;
  /** runs after the write is stored and its record on its way (not awaited by the author) */
  after?(w: W): void;
}

export interface Live {
  ctx: AppContext;
  io: LiveServer;
  presence: Presence;
  delivery: LiveDelivery;
  local(socket: LiveSocket): SocketLocal;
  /** a trace's case, time span and channels (cached: a stored trace never changes) */
  traceFacts(traceId: string): Promise<TraceFacts | undefined>;
  /** the socket's actor and the joined case, read fresh (plus `extra` statements in the same read) */
  check(socket: LiveSocket, extra?: (q: Tx) => Statement[]): Promise<Checked & { extra: unknown[] }>;
  /** the same, from a check at most QUIET_CHECK_MS old */
  quietCheck(socket: LiveSocket): Promise<Checked>;
  leaveRoom(socket: LiveSocket): Promise<void>;
  /** an acknowledged event: the ack gets `{ ok: true, ...result }` or `{ ok: false, error }` */
  acked<R extends object>(event: string, ack: unknown, fn: () => Promise<R>): void;
  /** an acknowledged write: checked by `prepare`, stored by the group commit, acknowledged in seq order */
  written<W extends { changed: boolean }, A extends object>(
    socket: LiveSocket,
    event: string,
    ack: unknown,
    prepare: () => Promise<PreparedWrite<W, A> | { stored: A }>,
  ): void;
  /** an unacknowledged event; refusals are dropped */
  quiet(event: string, fn: () => Promise<void>): void;
  /** forwards at most POINTER_RATE_HZ per socket; the latest of a burst is sent at the end of the gap */
  throttled<P>(t: Throttle<P>, payload: P, send: (p: P) => void): void;
  /** the users in a case's room right now (on every node) */
  presentUsers(caseId: string): Promise<string[]>;
  /** the notices of a new message or mark, read and sent in the background; a failure is logged */
  liveNotices(caseId: string, author: { id: string; name: string }, what: LiveHappening): void;
}

export type TraceFacts = Pick<typeof schema.trace.$inferSelect, "caseId" | "t0" | "durationS" | "channels">;

export interface Checked {
  actor: LiveActor;
  caseId: string;
  c: CaseFacts;
}

export function createLive(
  ctx: AppContext,
  io: LiveServer,
  parts: { presence: Presence; delivery: LiveDelivery; commits: GroupCommit; publish: (d: LiveRecord) => void },
): Live {
  const traceFacts = new Map<string, TraceFacts>();
  const locals = new WeakMap<LiveSocket, SocketLocal>();
  const reply = (ack: unknown) => (typeof ack === "function" ? (ack as (r: unknown) => void) : () => {});

  const local = (socket: LiveSocket): SocketLocal => {
    let l = locals.get(socket);
    if (!l) {
      l = {
        pointer: { last: 0, timer: null, pending: null },
        view: { last: 0, timer: null, pending: null },
        checked: null,
      };
      locals.set(socket, l);
    }
    return l;
  };

  const live: Live = {
    ctx,
    io,
    presence: parts.presence,
    delivery: parts.delivery,
    local,
    traceFacts: (traceId) => cachedTraceFacts(ctx, traceFacts, traceId),
    async check(socket, extra) {
      const caseId = socket.data.caseId;
      const now = ctx.now();
      const [users, cases, ...more] = (await ctx.db.batch("read", (q) => [
        sessionUserQuery(q, socket.data.sessionId, now),
        casePolicyQuery(q, caseId ?? ""),
        ...(extra ? extra(q) : []),
      ])) as [Parameters<typeof actorOfRows>[0], Awaited<ReturnType<typeof casePolicyQuery>>, ...unknown[]];
      const actor = actorOfRows(users);
      if (!actor || actor.id !== socket.data.userId) {
        setImmediate(() => socket.disconnect(true));
        throw unauthorized();
      }
      if (!caseId || socket.data.caseId !== caseId) throw notJoined();
      const row = cases[0];
      if (!row || !canJoinCase(actor, row)) {
        await live.leaveRoom(socket);
        throw notFound("Case");
      }
      local(socket).checked = { at: Date.now(), actor, c: row };
      return { actor, caseId, c: row, extra: more };
    },
    async quietCheck(socket) {
      const l = local(socket);
      const caseId = socket.data.caseId;
      if (!caseId) throw notJoined();
      if (l.checked && l.checked.c.id === caseId && Date.now() - l.checked.at < QUIET_CHECK_MS)
        return { actor: l.checked.actor, caseId, c: l.checked.c };
      // a burst of events shares one check
      if (l.checking?.caseId === caseId) return l.checking.p;
      const p = live.check(socket).finally(() => {
        if (l.checking?.p === p) l.checking = null;
      });
      l.checking = { caseId, p };
      return p;
    },
    async leaveRoom(socket) {
      const caseId = socket.data.caseId;
      if (!caseId) return;
      socket.data.caseId = null;
      const l = local(socket);
      l.checked = null;
      for (const t of [l.pointer, l.view]) {
        if (t.timer) clearTimeout(t.timer);
        t.timer = null;
        t.pending = null;
      }
      parts.delivery.leave(socket, caseId);
      void socket.leave(`case:${caseId}`);
      const { userLeft } = await parts.presence.leave(caseId, socket.id, socket.data.userId);
      // The user's pointer leaves the others' plots with their last socket.
      if (userLeft)
        io.to(`case:${caseId}`).emit("pointer", {
          caseId,
          userId: socket.data.userId,
          name: "",
          color: "",
          traceId: null,
        });
    },
    acked(event, ack, fn) {
      fn().then(
        (result) => reply(ack)({ ok: true, ...result }),
        (err: unknown) => reply(ack)({ ok: false, error: eventError(err, ctx, event) }),
      );
    },
    written(socket, event, ack, prepare) {
      const refuse = (err: unknown) => reply(ack)({ ok: false, error: eventError(err, ctx, event) });
      prepare().then((job) => {
        if ("stored" in job) return reply(ack)({ ok: true, ...job.stored });
        parts.commits.enqueue(job.plan, (err, w) => {
          if (err || !w) return refuse(err ?? new Error("no result"));
          let body: object;
          try {
            body = job.answer(w);
          } catch (e) {
            return refuse(e);
          }
          const answer = () => reply(ack)({ ok: true, ...body });
          if (!w.changed) return answer();
          const rec = job.record(w);
          parts.publish(rec);
          parts.delivery.deliver({
            caseId: job.plan.caseId,
            seq: rec.record.seq,
            rec,
            origin: { socketId: socket.id, ack: answer },
          });
          if (job.after) {
            try {
              job.after(w);
            } catch (e) {
              eventError(e, ctx, event);
            }
          }
        });
      }, refuse);
    },
    presentUsers: (caseId) => parts.presence.users(caseId),
    liveNotices: liveNoticeSender(ctx, parts.presence),
    quiet(event, fn) {
      fn().catch((err: unknown) => {
        if (!(err instanceof HttpError)) eventError(err, ctx, event);
      });
    },
    throttled: throttledSender(1000 / POINTER_RATE_HZ),
  };
  return live;
}

/** A trace's case and extent, read once per node (a trace's facts never change once stored). */
async function cachedTraceFacts(
  ctx: AppContext,
  cache: Map<string, TraceFacts>,
  traceId: string,
): Promise<TraceFacts | undefined> {
  let t = cache.get(traceId);
  if (t) return t;
  const { trace } = schema;
  const cols = { caseId: trace.caseId, t0: trace.t0, durationS: trace.durationS, channels: trace.channels };
  t = await ctx.db.read((tx) => tx.select(cols).from(trace).where(eq(trace.id, traceId)).get());
  if (t) {
    cache.set(traceId, t);
    if (cache.size > 10_000) cache.delete(cache.keys().next().value!);
  }
  return t;
}

/** Sends at most one payload per gap; the latest one waiting is sent when the gap has passed. */
function throttledSender(gapMs: number): Live["throttled"] {
  return (t, payload, send) => {
    const now = Date.now();
    if (!t.timer && now - t.last >= gapMs) {
      t.last = now;
      send(payload);
      return;
    }
    t.pending = payload;
    if (t.timer) return;
    t.timer = setTimeout(
      () => {
        t.timer = null;
        const p = t.pending;
        t.pending = null;
        if (p) {
          t.last = Date.now();
          send(p);
        }
      },
      Math.max(0, gapMs - (now - t.last)),
    );
    t.timer.unref?.();
  };
}
