/**
 * Live review over socket.io, on the same HTTP server and port as the API (path /socket.io).
 *
 * - Handshake: the Origin must be one of the app's own (server/app.ts allowedOrigins), checked
 *   before engine.io opens a session; then the session cookie is resolved by better-auth in
 *   `io.use`. No token in the URL. Connection-state recovery is not enabled: a reconnecting client
 *   re-joins with `since` and gets everything it missed from the database instead.
 * - Every event re-reads the session, the user and the case (all synchronous SQLite reads) and asks
 *   the live policy, so signing out or losing access stops the next event; a sweep every
 *   `sweepMs` disconnects sockets whose session or access has gone even if they stay silent.
 * - Writes commit (with the case's next seq) before anything is sent: the sender gets the stored
 *   record in its acknowledgement, the others get it as an event. Writes arriving together share
 *   one commit (./group-commit.ts); their acks and broadcasts still leave in seq order.
 * - Handlers are synchronous from the database read to the room join / broadcast, so a join's
 *   replay and the live events after it neither overlap nor leave a gap.
 */
import type http from "node:http";
import { inArray } from "drizzle-orm";
import { Server, type Socket } from "socket.io";
import type { z } from "zod";
import type { AppContext, Realtime } from "../context";
import type { Auth } from "../auth/auth";
import { allowedOrigins } from "../app";
import { schema } from "../db/client";
import { HttpError, notFound, unauthorized } from "../http/errors";
import { parseWith } from "../http/validate";
import { assertCanJoinCase, canJoinCase, liveAbilities } from "../auth/policies/live";
import { getCaseRow, type CaseRow } from "../services/cases";
import { createAnnotationIn, deleteAnnotationIn, headSeq, listAnnotations, updateAnnotationIn, type LiveActor } from "../services/annotations";
import { listMessages, postMessageIn } from "../services/messages";
import { groupCommit } from "./group-commit";
import { PresenceRegistry } from "../services/presence";
import { actorOfSession, actorsOfSessions, sessionIdFromHandshake } from "./session";
import {
  annotationCreateSchema,
  annotationDeleteSchema,
  annotationUpdateSchema,
  caseJoinSchema,
  chatSendSchema,
  chatTypingSchema,
  pointerMoveSchema,
  viewFollowSchema,
} from "../../shared/schemas/realtime";
import {
  caseRoom,
  POINTER_RATE_HZ,
  userRoom,
  type ClientToServerEvents,
  type EventError,
  type JoinOk,
  type PointerPayload,
  type ServerToClientEvents,
  type ViewPayload,
} from "../../shared/realtime";

interface Throttle<P> {
  last: number;
  timer: ReturnType<typeof setTimeout> | null;
  pending: P | null;
}

interface SocketData {
  sessionId: string;
  userId: string;
  caseId: string | null;
  pointer: Throttle<z.infer<typeof pointerMoveSchema>>;
  view: Throttle<z.infer<typeof viewFollowSchema>>;
}

type LiveServer = Server<ClientToServerEvents, ServerToClientEvents, Record<string, never>, SocketData>;
type LiveSocket = Socket<ClientToServerEvents, ServerToClientEvents, Record<string, never>, SocketData>;

export interface RealtimeServer extends Realtime {
  /** the socket.io server (tests and benchmarks look at it) */
  readonly io: LiveServer;
  /** drops the sockets opened with one session (e.g. from a better-auth session delete hook) */
  disconnectSession(sessionId: string): void;
  close(): Promise<void>;
}

export interface RealtimeOptions {
  /** how often silent sockets are checked for a gone session or lost access; default 1000 ms */
  sweepMs?: number;
}

/** Is this handshake from one of our own pages (or from a non-browser client, which sends no Origin)? */
export function handshakeOriginAllowed(headers: http.IncomingHttpHeaders, allowed: ReadonlySet<string>): boolean {
  const origin = headers.origin;
  if (origin === undefined) {
    const site = headers["sec-fetch-site"];
    return !site || site === "same-origin" || site === "none";
  }
  if (origin === "null") return false;
  return allowed.has(origin.replace(/\/$/, ""));
}

function eventError(err: unknown, ctx: AppContext, event: string): EventError {
  if (err instanceof HttpError) return { code: err.code, message: err.message, ...(err.details !== undefined ? { details: err.details } : {}) };
  ctx.logger.error({ err, event }, "realtime event failed");
  return { code: "internal", message: "Something went wrong on the server; nothing was saved. Try again." };
}

const notJoined = () => new HttpError(409, "not_joined", "Join the case first (case:join).");

export function attachRealtime(server: http.Server, ctx: AppContext, auth: Auth, opts: RealtimeOptions = {}): RealtimeServer {
  const allowed = new Set(allowedOrigins(ctx).map((o) => o.replace(/\/$/, "")));
  const io: LiveServer = new Server(server, {
    serveClient: false,
    maxHttpBufferSize: 64 * 1024,
    // Refused before engine.io opens a session: a page of another site never gets a socket.
    allowRequest: (req, cb) => cb(handshakeOriginAllowed(req.headers, allowed) ? null : "origin_refused", handshakeOriginAllowed(req.headers, allowed)),
  });

  const presence = new PresenceRegistry((caseId) => io.to(caseRoom(caseId)).emit("presence", presence.snapshot(caseId)));
  const traceCase = new Map<string, string>();
  const pointerGapMs = 1000 / POINTER_RATE_HZ;

  /** The case a trace belongs to (traces never move between cases, so this is cached). */
  function caseOfTrace(traceId: string): string | undefined {
    let c = traceCase.get(traceId);
    if (c) return c;
    c = ctx.db.select({ caseId: schema.trace.caseId }).from(schema.trace).where(inArray(schema.trace.id, [traceId])).get()?.caseId;
    if (c) {
      traceCase.set(traceId, c);
      if (traceCase.size > 10_000) traceCase.delete(traceCase.keys().next().value!);
    }
    return c;
  }

  io.use(async (socket, next) => {
    const fail = (code: string, message: string) => next(Object.assign(new Error(code), { data: { code, message } }));
    try {
      if (!handshakeOriginAllowed(socket.request.headers, allowed)) return fail("origin_refused", "Connections from another site are refused.");
      const sessionId = await sessionIdFromHandshake(socket.request.headers, auth);
      const actor = sessionId ? actorOfSession(ctx.db, sessionId, ctx.now()) : null;
      if (!sessionId || !actor) return fail("unauthenticated", "Sign in to continue.");
      socket.data = {
        sessionId,
        userId: actor.id,
        caseId: null,
        pointer: { last: 0, timer: null, pending: null },
        view: { last: 0, timer: null, pending: null },
      };
      void socket.join(userRoom(actor.id));
      next();
    } catch (err) {
      ctx.logger.error({ err }, "realtime handshake failed");
      fail("internal", "The server could not check the session.");
    }
  });

  /** The socket's actor, read fresh; a gone session ends the socket. */
  function actorOf(socket: LiveSocket): LiveActor {
    const actor = actorOfSession(ctx.db, socket.data.sessionId, ctx.now());
    if (!actor || actor.id !== socket.data.userId) {
      setImmediate(() => socket.disconnect(true));
      throw unauthorized();
    }
    return actor;
  }

  /** The actor and the joined case, still readable by them (else the socket leaves the room). */
  function inRoom(socket: LiveSocket): { actor: LiveActor; caseId: string; c: CaseRow } {
    const actor = actorOf(socket);
    const caseId = socket.data.caseId;
    if (!caseId) throw notJoined();
    const c = getCaseRow(ctx.db, caseId);
    if (!c || !canJoinCase(actor, c)) {
      leaveRoom(socket);
      throw notFound("Case");
    }
    return { actor, caseId, c };
  }

  function leaveRoom(socket: LiveSocket): void {
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
    if (userLeft) io.to(caseRoom(caseId)).emit("pointer", { caseId, userId: socket.data.userId, name: "", color: "", traceId: null });
    if (changed) io.to(caseRoom(caseId)).emit("presence", presence.snapshot(caseId));
  }

  /** Runs an acknowledged event: the ack gets `{ ok: true, ...result }` or `{ ok: false, error }`. */
  function acked<R extends object>(socket: LiveSocket, event: string, ack: unknown, fn: () => R): void {
    const reply = typeof ack === "function" ? (ack as (r: unknown) => void) : () => {};
    let result: R;
    try {
      result = fn();
    } catch (err) {
      reply({ ok: false, error: eventError(err, ctx, event) });
      return;
    }
    reply({ ok: true, ...result });
  }

  const commits = groupCommit(ctx.db, { onError: (err) => ctx.logger.error({ err }, "realtime commit failed") });

  /**
   * Runs an acknowledged write: `prepare` validates and checks access now and returns the work to
   * do in the group commit; `after` runs once it is committed (broadcast) and gives the ack's body.
   */
  function written<R, A extends object>(event: string, ack: unknown, prepare: () => { run: () => R; after: (r: R) => A }): void {
    const reply = typeof ack === "function" ? (ack as (r: unknown) => void) : () => {};
    let job: ReturnType<typeof prepare>;
    try {
      job = prepare();
    } catch (err) {
      reply({ ok: false, error: eventError(err, ctx, event) });
      return;
    }
    commits.enqueue(job.run, (err, r) => {
      if (err) return reply({ ok: false, error: eventError(err, ctx, event) });
      let body: A;
      try {
        body = job.after(r as R);
      } catch (e) {
        return reply({ ok: false, error: eventError(e, ctx, event) });
      }
      reply({ ok: true, ...body });
    });
  }

  /** Runs an unacknowledged event; refusals are dropped (the sender learns through its next acked event). */
  function quiet(event: string, fn: () => void): void {
    try {
      fn();
    } catch (err) {
      if (!(err instanceof HttpError)) eventError(err, ctx, event);
    }
  }

  /** Forwards at most POINTER_RATE_HZ per socket; the latest of a burst is sent at the end of the gap. */
  function throttled<P>(t: Throttle<P>, payload: P, send: (p: P) => void): void {
    const now = Date.now();
    if (!t.timer && now - t.last >= pointerGapMs) {
      t.last = now;
      send(payload);
      return;
    }
    t.pending = payload;
    if (!t.timer) {
      t.timer = setTimeout(() => {
        t.timer = null;
        const p = t.pending;
        t.pending = null;
        if (p) {
          t.last = Date.now();
          send(p);
        }
      }, Math.max(0, pointerGapMs - (now - t.last)));
      t.timer.unref?.();
    }
  }

  io.on("connection", (socket: LiveSocket) => {
    socket.on("case:join", (raw, ack) =>
      acked(socket, "case:join", ack, (): Omit<JoinOk, "ok"> => {
        const p = parseWith(caseJoinSchema, raw, "event");
        const actor = actorOf(socket);
        const c = getCaseRow(ctx.db, p.caseId);
        assertCanJoinCase(actor, c);
        if (socket.data.caseId && socket.data.caseId !== c.id) leaveRoom(socket);
        // Read the record and enter the room in one synchronous step: every later commit is
        // broadcast to this socket, every earlier one is in the replay.
        const replay = ctx.db.transaction((tx) => {
          const head = headSeq(tx, c.id);
          const reset = (p.since ?? 0) > head;
          const since = reset ? 0 : (p.since ?? 0);
          return { head, reset, annotations: listAnnotations(tx, c.id, since), messages: listMessages(tx, c.id, since) };
        });
        const already = socket.data.caseId === c.id;
        void socket.join(caseRoom(c.id));
        socket.data.caseId = c.id;
        if (!already) {
          presence.join(c.id, socket.id, { userId: actor.id, name: actor.name, role: actor.role, color: actor.color });
          socket.to(caseRoom(c.id)).emit("presence", presence.snapshot(c.id));
        }
        return {
          caseId: c.id,
          seq: replay.head,
          reset: replay.reset,
          annotations: replay.annotations,
          messages: replay.messages,
          presence: presence.snapshot(c.id),
          view: presence.view(c.id),
          you: { userId: actor.id, name: actor.name, role: actor.role, color: actor.color },
          abilities: liveAbilities(actor, c),
          caseStatus: c.status,
        };
      }),
    );

    socket.on("annotation:create", (raw, ack) =>
      written("annotation:create", ack, () => {
        const p = parseWith(annotationCreateSchema, raw, "event");
        const { actor, caseId } = inRoom(socket);
        const now = ctx.now();
        return {
          run: () => createAnnotationIn(ctx.db, now, actor, caseId, p),
          after: (w) => {
            if (w.changed) socket.to(caseRoom(caseId)).emit("annotation:created", w.record);
            return { annotation: w.record };
          },
        };
      }),
    );

    socket.on("annotation:update", (raw, ack) =>
      written("annotation:update", ack, () => {
        const p = parseWith(annotationUpdateSchema, raw, "event");
        const { actor, caseId } = inRoom(socket);
        const now = ctx.now();
        return {
          run: () => updateAnnotationIn(ctx.db, now, actor, caseId, p),
          after: (w) => {
            socket.to(caseRoom(caseId)).emit("annotation:updated", w.record);
            return { annotation: w.record };
          },
        };
      }),
    );

    socket.on("annotation:delete", (raw, ack) =>
      written("annotation:delete", ack, () => {
        const p = parseWith(annotationDeleteSchema, raw, "event");
        const { actor, caseId } = inRoom(socket);
        const now = ctx.now();
        return {
          run: () => deleteAnnotationIn(ctx.db, now, actor, caseId, p.id),
          after: (w) => {
            socket.to(caseRoom(caseId)).emit("annotation:deleted", w.record);
            return { annotation: w.record };
          },
        };
      }),
    );

    socket.on("chat:send", (raw, ack) =>
      written("chat:send", ack, () => {
        const p = parseWith(chatSendSchema, raw, "event");
        const { actor, caseId } = inRoom(socket);
        const now = ctx.now();
        return {
          run: () => postMessageIn(ctx.db, now, actor, caseId, p),
          after: (w) => {
            if (w.changed) socket.to(caseRoom(caseId)).emit("chat:message", w.record);
            if (presence.setTyping(caseId, actor.id, false)) io.to(caseRoom(caseId)).emit("presence", presence.snapshot(caseId));
            return { message: w.record };
          },
        };
      }),
    );

    socket.on("chat:typing", (raw) =>
      quiet("chat:typing", () => {
        const p = parseWith(chatTypingSchema, raw, "event");
        const { actor, caseId, c } = inRoom(socket);
        if (!liveAbilities(actor, c).chat) return;
        if (presence.setTyping(caseId, actor.id, p.typing)) io.to(caseRoom(caseId)).emit("presence", presence.snapshot(caseId));
      }),
    );

    socket.on("pointer:move", (raw) =>
      quiet("pointer:move", () => {
        const p = parseWith(pointerMoveSchema, raw, "event");
        const { caseId } = inRoom(socket);
        if (p.traceId !== null && caseOfTrace(p.traceId) !== caseId) return;
        throttled(socket.data.pointer, p, (q) =>
          quiet("pointer:move", () => {
            const { actor, caseId: room } = inRoom(socket);
            const out: PointerPayload = q.traceId === null ? { caseId: room, userId: actor.id, name: actor.name, color: actor.color, traceId: null } : { caseId: room, userId: actor.id, name: actor.name, color: actor.color, traceId: q.traceId, t: q.t, v: q.v };
            socket.volatile.to(caseRoom(room)).emit("pointer", out);
          }),
        );
      }),
    );

    socket.on("view:follow", (raw) =>
      quiet("view:follow", () => {
        const p = parseWith(viewFollowSchema, raw, "event");
        const { caseId } = inRoom(socket);
        if (caseOfTrace(p.traceId) !== caseId) return;
        throttled(socket.data.view, p, (q) =>
          quiet("view:follow", () => {
            const { actor, caseId: room } = inRoom(socket);
            const v: ViewPayload = { caseId: room, userId: actor.id, name: actor.name, role: actor.role, traceId: q.traceId, t0: q.t0, t1: q.t1, at: ctx.now().toISOString() };
            presence.setView(v);
            socket.to(caseRoom(room)).emit("view", v);
          }),
        );
      }),
    );

    socket.on("disconnect", () => leaveRoom(socket));
  });

  /** Disconnects sockets whose session has ended or whose case is no longer theirs to read. */
  function sweep(): void {
    try {
      const sockets = [...io.of("/").sockets.values()] as LiveSocket[];
      if (sockets.length === 0) return;
      const actors = actorsOfSessions(ctx.db, [...new Set(sockets.map((s) => s.data.sessionId))], ctx.now());
      const caseIds = [...new Set(sockets.map((s) => s.data.caseId).filter((x): x is string => !!x))];
      const cases = new Map<string, CaseRow>();
      for (let i = 0; i < caseIds.length; i += 500) {
        for (const c of ctx.db.select().from(schema.caseTable).where(inArray(schema.caseTable.id, caseIds.slice(i, i + 500))).all()) cases.set(c.id, c);
      }
      for (const s of sockets) {
        const a = actors.get(s.data.sessionId);
        if (!a || a.id !== s.data.userId) {
          s.disconnect(true);
          continue;
        }
        if (s.data.caseId) {
          const c = cases.get(s.data.caseId);
          if (!c || !canJoinCase(a, c)) s.disconnect(true);
        }
      }
    } catch (err) {
      ctx.logger.error({ err }, "realtime sweep failed");
    }
  }
  const sweepTimer = setInterval(sweep, opts.sweepMs ?? 1000);
  sweepTimer.unref?.();

  return {
    io,
    toCase(caseId, event, payload) {
      io.to(caseRoom(caseId)).emit(event as keyof ServerToClientEvents, payload as never);
      // Services announce a changed case as `case:updated` (entity "case"); the room also gets
      // the contract's `case:status` with the status as committed.
      if (event === "case:updated" && (payload as { entity?: string } | null)?.entity === "case") {
        const c = getCaseRow(ctx.db, caseId);
        if (c) io.to(caseRoom(caseId)).emit("case:status", { caseId, status: c.status, updatedAt: c.updatedAt.toISOString() });
      }
    },
    toUser(userId, event, payload) {
      io.to(userRoom(userId)).emit(event as keyof ServerToClientEvents, payload as never);
    },
    disconnectUser(userId) {
      io.in(userRoom(userId)).disconnectSockets(true);
    },
    disconnectSession(sessionId) {
      for (const s of io.of("/").sockets.values()) if (s.data.sessionId === sessionId) s.disconnect(true);
    },
    async close() {
      clearInterval(sweepTimer);
      commits.flush();
      io.disconnectSockets(true);
      presence.clear();
      // Not io.close(): that would also close the HTTP server, which startServer closes itself.
      io.engine.close();
    },
  };
}
