import { eq } from "drizzle-orm";
import { schema } from "../../db/client";
import { parseWith } from "../../http/validate";
import { HttpError, unauthorized } from "../../http/errors";
import { assertCanJoinCase, liveAbilities } from "../../auth/policies/live";
import type { CaseRow } from "../../workflow/records";
import { annotationsQuery, presentAnnotation } from "../../services/annotations";
import { messagesQuery, presentMessage } from "../../services/messages";
import { markSeen } from "../../services/reading";
import { actorOfRows, sessionUserQuery } from "../session";
import { caseJoinSchema } from "../../../shared/schemas/realtime";
import { caseRoom, type JoinOk } from "../../../shared/realtime";
import type { Db } from "../../db/client";
import type { Replay } from "../delivery";
import { eventError, type Live, type LiveSocket } from "../live";

/** The record after `since` and the case's head, in one snapshot (one round trip to a libSQL server). */
export async function readReplay(db: Db, caseId: string, since: number): Promise<Replay> {
  const [heads, marks, msgs] = await db.batch("read", (q) => [
    q.select({ seq: schema.caseSeq.seq }).from(schema.caseSeq).where(eq(schema.caseSeq.caseId, caseId)).limit(1),
    annotationsQuery(q, caseId, since),
    messagesQuery(q, caseId, since),
  ]);
  return {
    head: heads[0]?.seq ?? 0,
    annotations: marks.map((r) => presentAnnotation(r.a, r.authorName)),
    messages: msgs.map((r) => presentMessage(r.m, { name: r.name, role: r.role })),
  };
}

/** case:join — the record since the client's `since`, presence, the shared view, the abilities. */
export function onJoin(live: Live, socket: LiveSocket): void {
  const { ctx, presence, delivery } = live;
  const reply = (ack: unknown, body: unknown) => typeof ack === "function" && (ack as (b: unknown) => void)(body);
  socket.on(
    "case:join",
    (raw, ack) =>
      void (async () => {
        const p = parseWith(caseJoinSchema, raw, "event");
        const now = ctx.now();
        const [users, cases] = await ctx.db.batch("read", (q) => [
          sessionUserQuery(q, socket.data.sessionId, now),
          q.select().from(schema.caseTable).where(eq(schema.caseTable.id, p.caseId)).limit(1),
        ]);
        const actor = actorOfRows(users);
        if (!actor || actor.id !== socket.data.userId) {
          setImmediate(() => socket.disconnect(true));
          throw unauthorized();
        }
        const c: CaseRow | undefined = cases[0];
        assertCanJoinCase(actor, c);
        if (socket.data.caseId && socket.data.caseId !== c.id) await live.leaveRoom(socket);
        const already = socket.data.caseId === c.id;
        socket.data.caseId = c.id;
        live.local(socket).checked = { at: Date.now(), actor, c };
        void socket.join(caseRoom(c.id));
        if (!already)
          await presence.join(c.id, socket.id, {
            userId: actor.id,
            name: actor.name,
            role: actor.role,
            color: actor.color,
          });
        // Added to the case's stream first, then the replay is read: every record committed before is
        // in it, every one after comes after the acknowledgement (./delivery.ts).
        const read = async () => {
          const first = await readReplay(ctx.db, c.id, p.since ?? 0);
          // a `since` ahead of the case: the client's copy is from another database; send it all
          const reset = (p.since ?? 0) > first.head;
          const replay = reset ? await readReplay(ctx.db, c.id, 0) : first;
          // the record up to its head is in the replay: read, with the notices about it
          await markSeen(ctx.db, c.id, [actor.id], replay.head, ctx.now());
          const [snap, view] = await Promise.all([presence.snapshot(c.id), presence.view(c.id)]);
          return { ...replay, reset, snap, view };
        };
        let answered = false;
        await delivery.join(socket, c.id, read, (r) => {
          answered = true;
          const ok: JoinOk = {
            ok: true,
            caseId: c.id,
            seq: r.head,
            reset: r.reset,
            annotations: r.annotations,
            messages: r.messages,
            presence: r.snap,
            view: r.view,
            you: { userId: actor.id, name: actor.name, role: actor.role, color: actor.color },
            abilities: liveAbilities(actor, c),
            caseStatus: c.status,
          };
          reply(ack, ok);
        });
        // the socket left (or joined another case) while its replay was read: it still gets an answer
        if (!answered)
          throw new HttpError(409, "not_joined", "The connection left the case while joining; join again.");
      })().catch((err: unknown) => reply(ack, { ok: false, error: eventError(err, ctx, "case:join") })),
  );
}
