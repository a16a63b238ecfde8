import { and, eq } from "drizzle-orm";
import { schema } from "../../db/client";
import { parseWith } from "../../http/validate";
import { badRequest } from "../../http/errors";
import { assertLiveWrite, liveAbilities } from "../../auth/policies/live";
import { postMessageIn, presentMessage, type MessageRow, type PostedMessage } from "../../services/messages";
import { chatSendSchema, chatTypingSchema } from "../../../shared/schemas/realtime";
import { planMessage, withReaders } from "../writes";
import type { Live, LiveSocket, PreparedWrite } from "../live";

const { message } = schema;

/** chat:send (stored by the group commit, sent in seq order) and chat:typing (presence only). */
export function onChat(live: Live, socket: LiveSocket): void {
  const { ctx, presence } = live;
  socket.on("chat:send", (raw, ack) =>
    live.written(
      socket,
      "chat:send",
      ack,
      async (): Promise<PreparedWrite<PostedMessage, object> | { stored: object }> => {
        const p = parseWith(chatSendSchema, raw, "event");
        const present = live.presentUsers(socket.data.caseId ?? "").catch(() => [] as string[]);
        const { actor, caseId, c, extra } = await live.check(socket, (q) =>
          p.clientId
            ? [
                q
                  .select()
                  .from(message)
                  .where(and(eq(message.authorId, socket.data.userId), eq(message.clientId, p.clientId)))
                  .limit(1),
              ]
            : [],
        );
        assertLiveWrite(actor, c, p.request ? "requestData" : "chat");
        const prior = p.clientId ? (extra[0] as MessageRow[])[0] : undefined;
        if (prior) {
          if (prior.caseId !== caseId)
            throw badRequest("client_id_reused", "This clientId belongs to a message on another case.");
          return { stored: { message: presentMessage(prior, { name: actor.name, role: actor.role }) } };
        }
        const now = ctx.now();
        const exact = (tx: Parameters<typeof postMessageIn>[0]) => postMessageIn(tx, now, actor, caseId, p);
        // everybody in the room sees the message now: it is read for them (server/services/reading.ts)
        const plan = withReaders(planMessage(c, now, actor, p, exact), [actor.id, ...(await present)], now);
        return {
          plan,
          record: (w) => ({ kind: "message", record: w.record }),
          answer: (w) => ({ message: w.record }),
          after: (w) => {
            void presence.setTyping(caseId, actor.id, false).catch(() => {});
            const request = w.record.kind === "data_request";
            live.liveNotices(caseId, actor, { kind: "message", text: w.record.text, request });
          },
        };
      },
    ),
  );

  socket.on("chat:typing", (raw) =>
    live.quiet("chat:typing", async () => {
      const p = parseWith(chatTypingSchema, raw, "event");
      const { actor, caseId, c } = await live.quietCheck(socket);
      if (!liveAbilities(actor, c).chat) return;
      await presence.setTyping(caseId, actor.id, p.typing);
    }),
  );
}
