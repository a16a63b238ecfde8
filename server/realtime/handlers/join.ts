import { parseWith } from "../../http/validate";
import { assertCanJoinCase, liveAbilities } from "../../auth/policies/live";
import { getCaseRow } from "../../workflow/records";
import { headSeq, listAnnotations } from "../../services/annotations";
import { listMessages } from "../../services/messages";
import { markSeenIn } from "../../services/reading";
import { caseJoinSchema } from "../../../shared/schemas/realtime";
import { caseRoom, type JoinOk } from "../../../shared/realtime";
import type { Live, LiveSocket } from "../live";

/** case:join — the record since the client's `since`, presence, the shared view, the abilities. */
export function onJoin(live: Live, socket: LiveSocket): void {
  const { ctx, presence } = live;
  socket.on("case:join", (raw, ack) =>
    live.acked(socket, "case:join", ack, (): Omit<JoinOk, "ok"> => {
      const p = parseWith(caseJoinSchema, raw, "event");
      const actor = live.actorOf(socket);
      const c = getCaseRow(ctx.db, p.caseId);
      assertCanJoinCase(actor, c);
      if (socket.data.caseId && socket.data.caseId !== c.id) live.leaveRoom(socket);
      // Read the record and enter the room in one synchronous step: every later commit is
      // broadcast to this socket, every earlier one is in the replay.
      const replay = ctx.db.transaction((tx) => {
        const head = headSeq(tx, c.id);
        const reset = (p.since ?? 0) > head;
        const since = reset ? 0 : (p.since ?? 0);
        return { head, reset, annotations: listAnnotations(tx, c.id, since), messages: listMessages(tx, c.id, since) };
      });
      // the record up to its head is in the replay: read, with the notices about it
      markSeenIn(ctx.db, c.id, [actor.id], replay.head, ctx.now());
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
}
