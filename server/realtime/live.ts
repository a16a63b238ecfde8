/**
 * What every live-review handler shares: the socket.io server, presence, the group commit, and the
 * helpers that read the actor and the joined case fresh on every event and answer acknowledgements.
 * Handlers stay synchronous from the database read to the room join / broadcast (see ./index.ts).
 */
import type { Server, Socket } from "socket.io";
import type { z } from "zod";
import { inArray } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema } from "../db/client";
import { HttpError, notFound, unauthorized } from "../http/errors";
import { canJoinCase } from "../auth/policies/live";
import { getCaseRow, type CaseRow } from "../workflow/records";
import { runEffects } from "../workflow/effects";
import type { Effect } from "../workflow/effect";
import type { LiveActor } from "../services/annotations";
import type { PresenceRegistry } from "../services/presence";
import type { GroupCommit } from "./group-commit";
import { actorOfSession } from "./session";
import type { pointerMoveSchema, viewFollowSchema } from "../../shared/schemas/realtime";
import {
  caseRoom,
  POINTER_RATE_HZ,
  type ClientToServerEvents,
  type EventError,
  type ServerToClientEvents,
} from "../../shared/realtime";

export interface Throttle<P> {
  last: number;
  timer: ReturnType<typeof setTimeout> | null;
  pending: P | null;
}

export interface SocketData {
  sessionId: string;
  userId: string;
  caseId: string | null;
  pointer: Throttle<z.infer<typeof pointerMoveSchema>>;
  view: Throttle<z.infer<typeof viewFollowSchema>>;
}

export type LiveServer = Server<ClientToServerEvents, ServerToClientEvents, Record<string, never>, SocketData>;
export type LiveSocket = Socket<ClientToServerEvents, ServerToClientEvents, Record<string, never>, SocketData>;

export function eventError(err: unknown, ctx: AppContext, event: string): EventError {
  if (err instanceof HttpError)
    return { code: err.code, message: err.message, ...(err.details !== undefined ? { details: err.details } : {}) };
  ctx.logger.error({ err, event }, "realtime event failed");
  return { code: "internal", message: "Something went wrong on the server; nothing was saved. Try again." };
}

const notJoined = () => new HttpError(409, "not_joined", "Join the case first (case:join).");

export interface Live {
  ctx: AppContext;
  io: LiveServer;
  presence: PresenceRegistry;
  /** the case a trace belongs to (cached: traces never move) */
  caseOfTrace(traceId: string): string | undefined;
  /** the socket's actor, read fresh; a gone session ends the socket */
  actorOf(socket: LiveSocket): LiveActor;
  /** the actor and the joined case, still readable by them (else the socket leaves the room) */
  inRoom(socket: LiveSocket): { actor: LiveActor; caseId: string; c: CaseRow };
  leaveRoom(socket: LiveSocket): void;
  /** an acknowledged event: the ack gets `{ ok: true, ...result }` or `{ ok: false, error }` */
  acked<R extends object>(socket: LiveSocket, event: string, ack: unknown, fn: () => R): void;
  /** an acknowledged write: `prepare` checks now; `run` goes into the group commit; `after` runs once committed */
  written<R, A extends object>(event: string, ack: unknown, prepare: () => { run: () => R; after: (r: R) => A }): void;
  /** an unacknowledged event; refusals are dropped */
  quiet(event: string, fn: () => void): void;
  /** forwards at most POINTER_RATE_HZ per socket; the latest of a burst is sent at the end of the gap */
  throttled<P>(t: Throttle<P>, payload: P, send: (p: P) => void): void;
  /** the users in a case's room right now */
  presentUsers(caseId: string): string[];
  /** runs workflow effects (notices) after a commit, in the background; a failure is logged */
  runEffects(effects: Effect[]): void;
}

export function createLive(ctx: AppContext, io: LiveServer, presence: PresenceRegistry, commits: GroupCommit): Live {
  const traceCase = new Map<string, string>();
  const pointerGapMs = 1000 / POINTER_RATE_HZ;
  const reply = (ack: unknown) => (typeof ack === "function" ? (ack as (r: unknown) => void) : () => {});

  const live: Live = {
    ctx,
    io,
    presence,
    caseOfTrace(traceId) {
      let c = traceCase.get(traceId);
      if (c) return c;
      c = ctx.db
        .select({ caseId: schema.trace.caseId })
        .from(schema.trace)
        .where(inArray(schema.trace.id, [traceId]))
        .get()?.caseId;
      if (c) {
        traceCase.set(traceId, c);
        if (traceCase.size > 10_000) traceCase.delete(traceCase.keys().next().value!);
      }
      return c;
    },
    actorOf(socket) {
      const actor = actorOfSession(ctx.db, socket.data.sessionId, ctx.now());
      if (!actor || actor.id !== socket.data.userId) {
        setImmediate(() => socket.disconnect(true));
        throw unauthorized();
      }
      return actor;
    },
    inRoom(socket) {
      const actor = live.actorOf(socket);
      const caseId = socket.data.caseId;
      if (!caseId) throw notJoined();
      const c = getCaseRow(ctx.db, caseId);
      if (!c || !canJoinCase(actor, c)) {
        live.leaveRoom(socket);
        throw notFound("Case");
      }
      return { actor, caseId, c };
    },
    leaveRoom(socket) {
      const caseId = socket.data.caseId;
      if (!caseId) return;
      socket.data.caseId = null;
      for (const t of [socket.data.pointer, socket.data.view]) {
        if (t.timer) clearTimeout(t.timer);
        t.timer = null;
        t.pending = null;
      }
      void socket.leave(caseRoom(caseId));
      const { changed, userLeft } = presence.leave(caseId, socket.id, socket.data.userId);
      // The user's pointer leaves the others' plots with their last socket.
      if (userLeft)
        io.to(caseRoom(caseId)).emit("pointer", {
          caseId,
          userId: socket.data.userId,
          name: "",
          color: "",
          traceId: null,
        });
      if (changed) io.to(caseRoom(caseId)).emit("presence", presence.snapshot(caseId));
    },
    acked(socket, event, ack, fn) {
      let result;
      try {
        result = fn();
      } catch (err) {
        reply(ack)({ ok: false, error: eventError(err, ctx, event) });
        return;
      }
      reply(ack)({ ok: true, ...result });
    },
    written(event, ack, prepare) {
      let job: ReturnType<typeof prepare>;
      try {
        job = prepare();
      } catch (err) {
        reply(ack)({ ok: false, error: eventError(err, ctx, event) });
        return;
      }
      commits.enqueue(job.run, (err, r) => {
        if (err) return reply(ack)({ ok: false, error: eventError(err, ctx, event) });
        let body;
        try {
          body = job.after(r as never);
        } catch (e) {
          return reply(ack)({ ok: false, error: eventError(e, ctx, event) });
        }
        reply(ack)({ ok: true, ...body });
      });
    },
    quiet(event, fn) {
      try {
        fn();
      } catch (err) {
        if (!(err instanceof HttpError)) eventError(err, ctx, event);
      }
    },
    presentUsers(caseId) {
      return presence.snapshot(caseId).participants.map((p) => p.userId);
    },
    runEffects(effects) {
      if (effects.length === 0) return;
      runEffects(ctx, effects).catch((err: unknown) => ctx.logger.error({ err }, "live notices failed"));
    },
    throttled(t, payload, send) {
      const now = Date.now();
      if (!t.timer && now - t.last >= pointerGapMs) {
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
        Math.max(0, pointerGapMs - (now - t.last)),
      );
      t.timer.unref?.();
    },
  };
  return live;
}
