import { and, eq } from "drizzle-orm";
import { schema } from "../../db/client";
import { parseWith } from "../../http/validate";
import { notFound, badRequest } from "../../http/errors";
import { assertLiveWrite, assertOwnAnnotation } from "../../auth/policies/live";
import {
  checkOnTrace,
  createAnnotationIn,
  deleteAnnotationIn,
  presentAnnotation,
  updateAnnotationIn,
  updatedValues,
  type AnnotationRow,
  type Written,
} from "../../services/annotations";
import {
  annotationCreateSchema,
  annotationDeleteSchema,
  annotationUpdateSchema,
} from "../../../shared/schemas/realtime";
import { planChangeMark, planCreateMark, withReaders } from "../writes";
import type { Checked, Live, LiveSocket, PreparedWrite } from "../live";

const { annotation } = schema;

const asMark = (w: Written) => ({ kind: "annotation" as const, record: w.record });
const answer = (w: Written) => ({ annotation: w.record });

/** The author's live mark, checked as the exact path checks it (see services/annotations.ts loadOwn). */
async function ownMark(live: Live, socket: LiveSocket, id: string): Promise<Checked & { cur: AnnotationRow }> {
  const { actor, caseId, c, extra } = await live.check(socket, (q) => [
    q.select().from(annotation).where(eq(annotation.id, id)).limit(1),
  ]);
  assertLiveWrite(actor, c, "annotate");
  const cur = (extra[0] as AnnotationRow[])[0];
  if (!cur || cur.caseId !== caseId || cur.deletedAt) throw notFound("Annotation");
  assertOwnAnnotation(actor, cur);
  return { actor, caseId, c, cur };
}

/** annotation:create / update / delete — checked, stored by the group commit, sent in seq order. */
export function onAnnotations(live: Live, socket: LiveSocket): void {
  const { ctx } = live;

  socket.on("annotation:create", (raw, ack) =>
    live.written(
      socket,
      "annotation:create",
      ack,
      async (): Promise<PreparedWrite<Written, object> | { stored: object }> => {
        const p = parseWith(annotationCreateSchema, raw, "event");
        const present = live.presentUsers(socket.data.caseId ?? "").catch(() => [] as string[]);
        const { actor, caseId, c, extra } = await live.check(socket, (q) =>
          p.clientId
            ? [
                q
                  .select()
                  .from(annotation)
                  .where(and(eq(annotation.authorId, socket.data.userId), eq(annotation.clientId, p.clientId)))
                  .limit(1),
              ]
            : [],
        );
        assertLiveWrite(actor, c, "annotate");
        const prior = p.clientId ? (extra[0] as AnnotationRow[])[0] : undefined;
        if (prior) {
          if (prior.caseId !== caseId)
            throw badRequest("client_id_reused", "This clientId belongs to a mark on another case.");
          return { stored: { annotation: presentAnnotation(prior, actor.name) } };
        }
        const t = await live.traceFacts(p.traceId);
        if (!t || t.caseId !== caseId) throw notFound("Trace");
        checkOnTrace(t, p);
        const now = ctx.now();
        const exact = (tx: Parameters<typeof createAnnotationIn>[0]) => createAnnotationIn(tx, now, actor, caseId, p);
        // everybody in the room sees the mark now: read for them too (server/services/reading.ts)
        const plan = withReaders(planCreateMark(c, now, actor, p, exact), [actor.id, ...(await present)], now);
        const after = (w: Written) =>
          live.liveNotices(caseId, actor, { kind: "mark", mark: w.record.kind, label: w.record.label });
        return { plan, record: asMark, answer, after };
      },
    ),
  );

  socket.on("annotation:update", (raw, ack) =>
    live.written(socket, "annotation:update", ack, async () => {
      const p = parseWith(annotationUpdateSchema, raw, "event");
      const { actor, caseId, c, cur } = await ownMark(live, socket, p.id);
      const t = await live.traceFacts(cur.traceId);
      if (!t) throw notFound("Annotation");
      const next = updatedValues(cur, p, t);
      const now = ctx.now();
      const exact = (tx: Parameters<typeof updateAnnotationIn>[0]) => updateAnnotationIn(tx, now, actor, caseId, p);
      return { plan: planChangeMark(c, cur, { ...next, updatedAt: now }, actor, exact), record: asMark, answer };
    }),
  );

  socket.on("annotation:delete", (raw, ack) =>
    live.written(socket, "annotation:delete", ack, async () => {
      const p = parseWith(annotationDeleteSchema, raw, "event");
      const { actor, caseId, c, cur } = await ownMark(live, socket, p.id);
      const now = ctx.now();
      const exact = (tx: Parameters<typeof deleteAnnotationIn>[0]) => deleteAnnotationIn(tx, now, actor, caseId, p.id);
      return { plan: planChangeMark(c, cur, { updatedAt: now, deletedAt: now }, actor, exact), record: asMark, answer };
    }),
  );
}
