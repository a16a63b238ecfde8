/**
 * deleteDraft (the shop): a draft is removed with everything on it — its captures and photos (the
 * stored files too, unless another case holds the same content), its history, its notices. A case
 * that has been submitted is never deleted: it can be withdrawn before an expert takes it.
 */
import { and, eq } from "drizzle-orm";
import type { AppContext } from "../../context";
import type { Actor } from "../../auth/session";
import { schema } from "../../db/client";
import { conflict } from "../../http/errors";
import { contentInFlight, removeStoredFile } from "../../services/storage";
import { forgetOpenTrace, originalFilePath, traceDataFilePath } from "../../services/traces";
import { photoFilePath } from "../../services/photos";
import type { DeletedDraftView } from "../../../shared/views/workflow";
import { perform } from "../effects";
import { authorized } from "./authorized";

const { caseTable, trace, photo, notification } = schema;

/** DELETE /api/cases/:id */
export async function deleteDraft(ctx: AppContext, actor: Actor, caseId: string): Promise<DeletedDraftView> {
  const { result } = await perform(ctx, async (tx, fx) => {
    const { c } = await authorized(tx, actor, "deleteDraft", caseId);
    const traces = await tx.select().from(trace).where(eq(trace.caseId, c.id)).all();
    const photos = await tx.select().from(photo).where(eq(photo.caseId, c.id)).all();
    await tx.delete(notification).where(eq(notification.caseId, c.id)).run();
    const gone = await tx
      .delete(caseTable)
      .where(and(eq(caseTable.id, c.id), eq(caseTable.status, "draft")))
      .returning({ id: caseTable.id })
      .all();
    if (gone.length !== 1) throw conflict("case_locked", "The case changed in the meantime; reload it.");
    fx.push({ kind: "announce", caseId });
    return { traces, photos };
  });
  // The rows are gone; now their files, unless another trace or photo holds the same content.
  const stillUsed = async (table: typeof trace | typeof photo, sha256: string) => {
    const row = await ctx.db.read((tx) =>
      tx.select({ id: table.id }).from(table).where(eq(table.sha256, sha256)).limit(1).get(),
    );
    return row !== undefined;
  };
  for (const t of result.traces) {
    forgetOpenTrace(traceDataFilePath(ctx, t));
    await removeStoredFile(traceDataFilePath(ctx, t));
    const original = originalFilePath(ctx, t);
    if (contentInFlight(original) === 0 && !(await stillUsed(trace, t.sha256))) await removeStoredFile(original);
  }
  for (const p of result.photos) {
    const abs = photoFilePath(ctx, p);
    if (contentInFlight(abs) === 0 && !(await stillUsed(photo, p.sha256))) await removeStoredFile(abs);
  }
  return { id: caseId, deleted: true, traces: result.traces.length, photos: result.photos.length };
}
