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
import { Server } from "socket.io";
import type { AppContext, Realtime } from "../context";
import type { Auth } from "../auth/auth";
import { allowedOrigins } from "../app";
import { schema } from "../db/client";
import { canJoinCase } from "../auth/policies/live";
import { getCaseRow, type CaseRow } from "../workflow/records";
import { groupCommit } from "./group-commit";
import { PresenceRegistry } from "../services/presence";
import { actorOfSession, actorsOfSessions, sessionIdFromHandshake } from "./session";
import { caseRoom, userRoom, type ServerToClientEvents } from "../../shared/realtime";
import { createLive, type Live, type LiveServer, type LiveSocket } from "./live";
import { onJoin } from "./handlers/join";
import { onAnnotations } from "./handlers/annotations";
import { onChat } from "./handlers/chat";
import { onPointer } from "./handlers/pointer";

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

/** The handshake: our own origin, then the session cookie (resolved by better-auth). */
function authenticateSockets(io: LiveServer, ctx: AppContext, auth: Auth, allowed: ReadonlySet<string>): void {
  io.use(async (socket, next) => {
    const fail = (code: string, message: string) => next(Object.assign(new Error(code), { data: { code, message } }));
    try {
      if (!handshakeOriginAllowed(socket.request.headers, allowed))
        return fail("origin_refused", "Connections from another site are refused.");
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
}

/** Disconnects sockets whose session has ended or whose case is no longer theirs to read. */
function sweepSockets(live: Live): void {
  const { ctx, io } = live;
  try {
    const sockets = [...io.of("/").sockets.values()] as LiveSocket[];
    if (sockets.length === 0) return;
    const actors = actorsOfSessions(ctx.db, [...new Set(sockets.map((s) => s.data.sessionId))], ctx.now());
    const caseIds = [...new Set(sockets.map((s) => s.data.caseId).filter((x): x is string => !!x))];
    const cases = new Map<string, CaseRow>();
    for (let i = 0; i < caseIds.length; i += 500) {
      const chunk = caseIds.slice(i, i + 500);
      for (const c of ctx.db.select().from(schema.caseTable).where(inArray(schema.caseTable.id, chunk)).all())
        cases.set(c.id, c);
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

export function attachRealtime(
  server: http.Server,
  ctx: AppContext,
  auth: Auth,
  opts: RealtimeOptions = {},
): RealtimeServer {
  const allowed = new Set(allowedOrigins(ctx).map((o) => o.replace(/\/$/, "")));
  const io: LiveServer = new Server(server, {
    serveClient: false,
    maxHttpBufferSize: 64 * 1024,
    // Refused before engine.io opens a session: a page of another site never gets a socket.
    allowRequest: (req, cb) =>
      cb(
        handshakeOriginAllowed(req.headers, allowed) ? null : "origin_refused",
        handshakeOriginAllowed(req.headers, allowed),
      ),
  });
  const presence = new PresenceRegistry((caseId) =>
    io.to(caseRoom(caseId)).emit("presence", presence.snapshot(caseId)),
  );
  const commits = groupCommit(ctx.db, { onError: (err) => ctx.logger.error({ err }, "realtime commit failed") });
  const live = createLive(ctx, io, presence, commits);

  authenticateSockets(io, ctx, auth, allowed);
  io.on("connection", (socket: LiveSocket) => {
    onJoin(live, socket);
    onAnnotations(live, socket);
    onChat(live, socket);
    onPointer(live, socket);
    socket.on("disconnect", () => live.leaveRoom(socket));
  });
  const sweepTimer = setInterval(() => sweepSockets(live), opts.sweepMs ?? 1000);
  sweepTimer.unref?.();

  return {
    io,
    toCase(caseId, event, payload) {
      io.to(caseRoom(caseId)).emit(event as keyof ServerToClientEvents, payload as never);
      // Services announce a changed case as `case:updated` (entity "case"); the room also gets
      // the contract's `case:status` with the status as committed.
      if (event === "case:updated" && (payload as { entity?: string } | null)?.entity === "case") {
        const c = getCaseRow(ctx.db, caseId);
        if (c)
          io.to(caseRoom(caseId)).emit("case:status", {
            caseId,
            status: c.status,
            updatedAt: c.updatedAt.toISOString(),
          });
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
