/** The socket types of the live review (shared by its modules without importing each other). */
import type { Server, Socket } from "socket.io";
import type { ClientToServerEvents, ServerToClientEvents } from "../../shared/realtime";

/** What a socket carries from its handshake on: its session, its user, the case it joined. */
export interface SocketData {
  sessionId: string;
  userId: string;
  caseId: string | null;
}

export type LiveServer = Server<ClientToServerEvents, ServerToClientEvents, Record<string, never>, SocketData>;
export type LiveSocket = Socket<ClientToServerEvents, ServerToClientEvents, Record<string, never>, SocketData>;
