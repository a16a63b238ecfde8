import type http from "node:http";
import type { AppContext, Realtime } from "../context";
import type { Auth } from "../auth/auth";

/** Realtime layer (socket.io). Placeholder until live review lands: emits go nowhere. */
export function attachRealtime(_server: http.Server, _ctx: AppContext, _auth: Auth): Realtime & { close(): Promise<void> } {
  return { toCase() {}, toUser() {}, disconnectUser() {}, async close() {} };
}
