/**
 * Sessions of sockets. The handshake is authenticated by better-auth from the session cookie
 * (no token in the URL); after that each write re-reads the session and its user (other events
 * at most a second old), so a signed-out, expired or removed account stops at its next event.
 */
import type { IncomingHttpHeaders } from "node:http";
import { and, eq, gt, inArray } from "drizzle-orm";
import { fromNodeHeaders } from "better-auth/node";
import type { Auth } from "../auth/auth";
import { schema, type Tx } from "../db/client";
import { knownRole, type Actor } from "../auth/session";
import type { LiveActor } from "../services/annotations";
import type { Role } from "../../shared/domain/case-status";
import { authorColor } from "../../shared/realtime";

const { session, user } = schema;

/** The session id behind a handshake's cookie, or null when signed out. */
export async function sessionIdFromHandshake(headers: IncomingHttpHeaders, auth: Auth): Promise<string | null> {
  const s = await auth.api.getSession({ headers: fromNodeHeaders(headers) });
  return s?.session?.id ? String(s.session.id) : null;
}

type UserRow = Pick<typeof user.$inferSelect, "id" | "email" | "name" | "role" | "shopId" | "color" | "deactivatedAt">;

/** The same rules as server/auth/session.ts actorFromHeaders, plus the mark colour. */
function toActor(u: UserRow): LiveActor | null {
  if (u.deactivatedAt) return null;
  // an unknown stored role grants nothing: treated as signed out (as actorFromHeaders does)
  const role: Role | null = knownRole(u.role);
  if (!role) return null;
  const actor: Actor = {
    id: u.id,
    email: u.email,
    name: u.name,
    role,
    shopId: role === "technician" || role === "owner" ? (u.shopId ?? null) : null,
  };
  return { ...actor, color: authorColor({ id: u.id, role, color: u.color }) };
}

const userCols = {
  id: user.id,
  email: user.email,
  name: user.name,
  role: user.role,
  shopId: user.shopId,
  color: user.color,
  deactivatedAt: user.deactivatedAt,
};

/** The query of a live session's user (empty when the session is gone or expired). */
export function sessionUserQuery(tx: Tx, sessionId: string, now: Date) {
  return tx
    .select({ ...userCols })
    .from(session)
    .innerJoin(user, eq(user.id, session.userId))
    .where(and(eq(session.id, sessionId), gt(session.expiresAt, now)))
    .limit(1);
}

/** The actor of a session's query result, or null when the session is gone, expired, or its account removed. */
export function actorOfRows(rows: UserRow[]): LiveActor | null {
  return rows[0] ? toActor(rows[0]) : null;
}

/** The actor of a live session, or null when the session is gone, expired, or its account removed. */
export async function actorOfSession(tx: Tx, sessionId: string, now: Date): Promise<LiveActor | null> {
  return actorOfRows(await sessionUserQuery(tx, sessionId, now));
}

/** The live actors of many sessions at once (for the periodic sweep); missing ones are absent. */
export async function actorsOfSessions(tx: Tx, sessionIds: string[], now: Date): Promise<Map<string, LiveActor>> {
  const out = new Map<string, LiveActor>();
  for (let i = 0; i < sessionIds.length; i += 500) {
    const chunk = sessionIds.slice(i, i + 500);
    const rows = await tx
      .select({ sessionId: session.id, ...userCols })
      .from(session)
      .innerJoin(user, eq(user.id, session.userId))
      .where(and(inArray(session.id, chunk), gt(session.expiresAt, now)))
      .all();
    for (const { sessionId, ...u } of rows) {
      const a = toActor(u);
      if (a) out.set(sessionId, a);
    }
  }
  return out;
}
