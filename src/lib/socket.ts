import { io, type Socket } from "socket.io-client";
import type { ClientToServerEvents, ServerToClientEvents } from "../../shared/realtime";

/** A socket of the live-review contract (shared/realtime.ts). */
export type LiveSocket = Socket<ServerToClientEvents, ClientToServerEvents>;

/**
 * A new socket to this page's own origin (path /socket.io). The session travels in its HttpOnly
 * cookie: no token in the URL. Not connected yet: the caller attaches its handlers, then connects.
 * The WebSocket is tried first (the browser always sends Origin with it, which the server checks);
 * long-polling remains as a fallback.
 */
export function createLiveSocket(): LiveSocket {
  return io({
    path: "/socket.io",
    autoConnect: false,
    withCredentials: true,
    transports: ["websocket", "polling"],
    reconnectionDelay: 500,
    reconnectionDelayMax: 5000,
    timeout: 10_000,
  });
}
