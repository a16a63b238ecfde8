import { parseWith } from "../../http/validate";
import { liveAbilities } from "../../auth/policies/live";
import { postMessageIn } from "../../services/messages";
import { markSeenIn } from "../../services/reading";
import { liveHappeningEffects } from "../../workflow/live-notices";
import { chatSendSchema, chatTypingSchema } from "../../../shared/schemas/realtime";
import { caseRoom } from "../../../shared/realtime";
import type { Live, LiveSocket } from "../live";

/** chat:send (written in the group commit) and chat:typing (presence only). */
export function onChat(live: Live, socket: LiveSocket): void {
  const { ctx, io, presence } = live;
  socket.on("chat:send", (raw, ack) =>
    live.written("chat:send", ack, () => {
      const p = parseWith(chatSendSchema, raw, "event");
      const { actor, caseId, c } = live.inRoom(socket);
      const now = ctx.now();
      return {
        run: () => {
          const w = postMessageIn(ctx.db, now, actor, caseId, p);
          // everybody in the room sees the message now: it is read for them
          if (w.changed) markSeenIn(ctx.db, caseId, [actor.id, ...live.presentUsers(caseId)], w.record.seq, now);
          return w;
        },
        after: (w) => {
          if (w.changed) {
            socket.to(caseRoom(caseId)).emit("chat:message", w.record);
            const what = { kind: "message", text: w.record.text, request: w.record.kind === "data_request" } as const;
            live.runEffects(liveHappeningEffects(ctx.db, c, actor, what, new Set(live.presentUsers(caseId))));
          }
          if (presence.setTyping(caseId, actor.id, false))
            io.to(caseRoom(caseId)).emit("presence", presence.snapshot(caseId));
          return { message: w.record };
        },
      };
    }),
  );

  socket.on("chat:typing", (raw) =>
    live.quiet("chat:typing", () => {
      const p = parseWith(chatTypingSchema, raw, "event");
      const { actor, caseId, c } = live.inRoom(socket);
      if (!liveAbilities(actor, c).chat) return;
      if (presence.setTyping(caseId, actor.id, p.typing))
        io.to(caseRoom(caseId)).emit("presence", presence.snapshot(caseId));
    }),
  );
}
