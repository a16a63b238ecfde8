/**
 * Live review over socket.io, on the same HTTP server and port as the API (path /socket.io).
 *
 * - Handshake: the Origin must be one of the app's own (server/app.ts allowedOrigins), checked
 *   before engine.io opens a session; then the session cookie is resolved by better-auth in
 *   `io.use`. No token in the URL. A reconnecting client re-joins with `since` and gets everything
 *   it missed from the database — also when it comes back on another node, or after the node it
 *   was on died (the Redis streams adapter could restore a session on another node, but not one
 *   whose node was killed; the database can).
 * - Several nodes (REDIS_URL): the socket.io Redis streams adapter carries every room broadcast,
 *   `disconnectSockets` and the stored records (`live:record`, from node to node) across nodes;
 *   presence is kept in Redis (./presence.ts). One node: socket.io's in-memory adapter.
 * - Writes are checked, then stored by the group commit (./group-commit.ts) with the case's next
 *   seq from the database; the stored record goes to this node's room and to the other nodes,
 *   and every node sends the records to its sockets in seq order, each once (./delivery.ts).
 * - Signing out, a removed account or lost access: the session's sockets (`session:<id>` room) or
 *   the user's (`user:<id>`) are dropped on every node at once; a sweep every `sweepMs` on each
 *   node also disconnects sockets whose session or access has gone even if they stay silent.
 */
import type http from "node:http";
import { Server, type ServerOptions } from "socket.io";
import { createAdapter } from "@socket.io/redis-streams-adapter";
import type { AppContext, Realtime } from "../context";
import type { Auth } from "../auth/auth";
import { allowedOrigins } from "../app";
import { getCaseRow } from "../workflow/records";
import type { SharedRedis } from "../cluster/redis";
import { groupCommit } from "./group-commit";
import { localPresence, redisPresence, type Presence } from "./presence";
import { LiveDelivery, type LiveRecord } from "./delivery";
import { actorOfSession, sessionIdFromHandshake } from "./session";
import { sweepSockets } from "./sweep";
import { caseRoom, userRoom, type ServerToClientEvents } from "../../shared/realtime";
import { createLive, type LiveServer, type LiveSocket } from "./live";
import { onJoin, readReplay } from "./handlers/join";
import { onAnnotations } from "./handlers/annotations";
import { onChat } from "./handlers/chat";
import { onPointer } from "./handlers/pointer";

export interface RealtimeServer extends Realtime {
  /** the socket.io server (tests and benchmarks look at it) */
  readonly io: LiveServer;
  close(): Promise<void>;
}

export interface RealtimeOptions {
  /** how often silent sockets are checked for a gone session or lost access; default 1000 ms */
  sweepMs?: number;
  /** the shared Redis of several nodes (REDIS_URL), or none */
  redis?: SharedRedis | null;
}

/** The room of every socket opened with one session. */
export const sessionRoom = (sessionId: string) => `session:${sessionId}`;

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
      const actor = sessionId ? await ctx.db.read((tx) => actorOfSession(tx, sessionId, ctx.now())) : null;
      if (!sessionId || !actor) return fail("unauthenticated", "Sign in to continue.");
      socket.data = { sessionId, userId: actor.id, caseId: null };
      void socket.join([userRoom(actor.id), sessionRoom(sessionId)]);
      next();
    } catch (err) {
      ctx.logger.error({ err }, "realtime handshake failed");
      fail("internal", "The server could not check the session.");
    }
  });
}

/** socket.io's options: the Redis streams adapter when several nodes share a Redis. */
function serverOptions(allowed: ReadonlySet<string>, redis: SharedRedis | null): Partial<ServerOptions> {
  return {
    serveClient: false,
    maxHttpBufferSize: 64 * 1024,
    // Refused before engine.io opens a session: a page of another site never gets a socket.
    allowRequest: (req, cb) =>
      cb(
        handshakeOriginAllowed(req.headers, allowed) ? null : "origin_refused",
        handshakeOriginAllowed(req.headers, allowed),
      ),
    ...(redis
      ? {
          adapter: createAdapter(redis.connection(), {
            streamName: "bl:socket.io",
            maxLen: 10_000,
            blockTimeInMs: 1000,
            onlyPlaintext: true,
          }),
        }
      : {}),
  };
}

export async function attachRealtime(
  server: http.Server,
  ctx: AppContext,
  auth: Auth,
  opts: RealtimeOptions = {},
): Promise<RealtimeServer> {
  const redis = opts.redis ?? null;
  const allowed = new Set(allowedOrigins(ctx).map((o) => o.replace(/\/$/, "")));
  const io: LiveServer = new Server(server, serverOptions(allowed, redis));
  const emitPresence = (caseId: string, snapshot: Parameters<ServerToClientEvents["presence"]>[0]) =>
    io.local.to(caseRoom(caseId)).emit("presence", snapshot);
  const presence: Presence = redis ? await redisPresence(redis, emitPresence, ctx.logger) : localPresence(emitPresence);
  const commits = groupCommit(ctx.db, { onError: (err) => ctx.logger.error({ err }, "realtime commit failed") });
  const delivery = new LiveDelivery({
    readSince: (caseId, since) => readReplay(ctx.db, caseId, since),
    onError: (err) => ctx.logger.error({ err }, "live records could not be read to fill a gap"),
  });
  // a record stored here goes to the other nodes (each serves its own sockets in seq order)
  const publish = (rec: LiveRecord) => {
    if (redis) io.serverSideEmit("live:record" as never, rec as never);
  };
  if (redis)
    io.on("live:record" as never, (rec: LiveRecord) =>
      delivery.deliver({ caseId: rec.record.caseId, seq: rec.record.seq, rec }),
    );
  const live = createLive(ctx, io, { presence, delivery, commits, publish });

  authenticateSockets(io, ctx, auth, allowed);
  io.on("connection", (socket: LiveSocket) => {
    onJoin(live, socket);
    onAnnotations(live, socket);
    onChat(live, socket);
    onPointer(live, socket);
    socket.on(
      "disconnect",
      () => void live.leaveRoom(socket).catch((err) => ctx.logger.warn({ err }, "leaving the room failed")),
    );
  });
  let sweeping = false;
  const sweepTimer = setInterval(() => {
    if (sweeping) return;
    sweeping = true;
    sweepSockets(live)
      .catch((err) => ctx.logger.error({ err }, "realtime sweep failed"))
      .finally(() => (sweeping = false));
  }, opts.sweepMs ?? 1000);
  sweepTimer.unref?.();

  return {
    io,
    toCase(caseId, event, payload) {
      io.to(caseRoom(caseId)).emit(event as keyof ServerToClientEvents, payload as never);
      // Services announce a changed case as `case:updated` (entity "case"); the room also gets
      // the contract's `case:status` with the status as committed.
      if (event === "case:updated" && (payload as { entity?: string } | null)?.entity === "case") {
        ctx.db
          .read((tx) => getCaseRow(tx, caseId))
          .then((c) => {
            if (c)
              io.to(caseRoom(caseId)).emit("case:status", {
                caseId,
                status: c.status,
                updatedAt: c.updatedAt.toISOString(),
              });
          })
          .catch((err) => ctx.logger.warn({ err }, "case:status not sent"));
      }
    },
    toUser(userId, event, payload) {
      io.to(userRoom(userId)).emit(event as keyof ServerToClientEvents, payload as never);
    },
    disconnectUser(userId) {
      io.in(userRoom(userId)).disconnectSockets(true);
    },
    disconnectSession(sessionId) {
      io.in(sessionRoom(sessionId)).disconnectSockets(true);
    },
    async close() {
      clearInterval(sweepTimer);
      await commits.flush();
      delivery.close();
      io.local.disconnectSockets(true);
      await presence.close().catch(() => {});
      // Not io.close(): that would also close the HTTP server, which startServer closes itself.
      io.engine.close();
      // the adapter's own Redis connections (its stream reader) end with it
      await Promise.resolve(io.of("/").adapter.close?.()).catch(() => {});
    },
  };
}
