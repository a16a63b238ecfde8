/**
 * The sweep of a node's silent sockets: a socket whose session has ended, or whose case is no longer
 * its user's to read, is disconnected even if it sends nothing (./index.ts runs it every `sweepMs`).
 */
import { inArray } from "drizzle-orm";
import { schema } from "../db/client";
import { canJoinCase } from "../auth/policies/live";
import type { CaseRow } from "../workflow/records";
import { actorsOfSessions } from "./session";
import type { Live, LiveSocket } from "./live";

/**
 * Each socket is judged on what was read for it: its session, and the case it was in when the sweep
 * began. The read is a round trip (several on a libSQL server, long under load), and a socket that
 * joins or changes case meanwhile has been checked by its join; judged by a case the read did not
 * cover, it would be dropped with its join's acknowledgement still on the way.
 */
export async function sweepSockets(live: Pick<Live, "ctx" | "io">): Promise<void> {
  const { ctx, io } = live;
  const sockets = [...io.of("/").sockets.values()].map((s) => ({
    s: s as LiveSocket,
    caseId: (s as LiveSocket).data.caseId,
  }));
  if (sockets.length === 0) return;
  const sessionIds = [...new Set(sockets.map(({ s }) => s.data.sessionId))];
  const caseIds = [...new Set(sockets.map(({ caseId }) => caseId).filter((x): x is string => !!x))];
  const { actors, cases } = await ctx.db.read(async (tx) => {
    const actors = await actorsOfSessions(tx, sessionIds, ctx.now());
    const cases = new Map<string, CaseRow>();
    for (let i = 0; i < caseIds.length; i += 500) {
      const chunk = caseIds.slice(i, i + 500);
      for (const c of await tx.select().from(schema.caseTable).where(inArray(schema.caseTable.id, chunk)).all())
        cases.set(c.id, c);
    }
    return { actors, cases };
  });
  for (const { s, caseId } of sockets) {
    const a = actors.get(s.data.sessionId);
    if (!a || a.id !== s.data.userId) {
      s.disconnect(true);
      continue;
    }
    // in another case (or none) since the sweep began: its join checked it; the next sweep will too
    if (!caseId || s.data.caseId !== caseId) continue;
    const c = cases.get(caseId);
    if (!c || !canJoinCase(a, c)) s.disconnect(true);
  }
}
