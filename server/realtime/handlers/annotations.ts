import { parseWith } from "../../http/validate";
import { createAnnotationIn, deleteAnnotationIn, updateAnnotationIn } from "../../services/annotations";
import {
  annotationCreateSchema,
  annotationDeleteSchema,
  annotationUpdateSchema,
} from "../../../shared/schemas/realtime";
import { caseRoom } from "../../../shared/realtime";
import { markSeenIn } from "../../services/reading";
import { liveHappeningEffects } from "../../workflow/live-notices";
import type { Live, LiveSocket } from "../live";

/** annotation:create / update / delete — written in the group commit, broadcast after it. */
export function onAnnotations(live: Live, socket: LiveSocket): void {
  const { ctx } = live;
  socket.on("annotation:create", (raw, ack) =>
    live.written("annotation:create", ack, () => {
      const p = parseWith(annotationCreateSchema, raw, "event");
      const { actor, caseId, c } = live.inRoom(socket);
      const now = ctx.now();
      return {
        run: () => {
          const w = createAnnotationIn(ctx.db, now, actor, caseId, p);
          if (w.changed) markSeenIn(ctx.db, caseId, [actor.id, ...live.presentUsers(caseId)], w.record.seq, now);
          return w;
        },
        after: (w) => {
          if (w.changed) {
            socket.to(caseRoom(caseId)).emit("annotation:created", w.record);
            const what = { kind: "mark", mark: w.record.kind, label: w.record.label } as const;
            live.runEffects(liveHappeningEffects(ctx.db, c, actor, what, new Set(live.presentUsers(caseId))));
          }
          return { annotation: w.record };
        },
      };
    }),
  );

  socket.on("annotation:update", (raw, ack) =>
    live.written("annotation:update", ack, () => {
      const p = parseWith(annotationUpdateSchema, raw, "event");
      const { actor, caseId } = live.inRoom(socket);
      const now = ctx.now();
      return {
        run: () => updateAnnotationIn(ctx.db, now, actor, caseId, p),
        after: (w) => {
          socket.to(caseRoom(caseId)).emit("annotation:updated", w.record);
          return { annotation: w.record };
        },
      };
    }),
  );

  socket.on("annotation:delete", (raw, ack) =>
    live.written("annotation:delete", ack, () => {
      const p = parseWith(annotationDeleteSchema, raw, "event");
      const { actor, caseId } = live.inRoom(socket);
      const now = ctx.now();
      return {
        run: () => deleteAnnotationIn(ctx.db, now, actor, caseId, p.id),
        after: (w) => {
          socket.to(caseRoom(caseId)).emit("annotation:deleted", w.record);
          return { annotation: w.record };
        },
      };
    }),
  );
}
