/**
 * Which trace the actor may plot: the one question behind GET /api/traces/:id/window, answered by
 * one policy (server/auth/policies/traces.ts mayReadTraceWindow) over the trace's case and the
 * casebook entry it may have been published with. A trace the actor may not plot answers 404 like
 * a missing one.
 */
import type { AppContext } from "../context";
import type { Actor } from "../auth/session";
import { notFound } from "../http/errors";
import { mayReadTraceWindow } from "../auth/policies/traces";
import { expertProfileOf, getCaseRow } from "../workflow/records";
import { getTraceRow, type TraceRow } from "./traces";
import { publishedEntryOfTrace } from "./casebook";

export async function traceForWindow(ctx: AppContext, actor: Actor, traceId: string): Promise<TraceRow> {
  const t = await getTraceRow(ctx, traceId);
  if (!t) throw notFound("Trace");
  const allowed = await ctx.db.read(async (tx) =>
    mayReadTraceWindow(
      actor,
      await expertProfileOf(tx, actor),
      await getCaseRow(tx, t.caseId),
      await publishedEntryOfTrace(tx, t.id),
    ),
  );
  if (!allowed) throw notFound("Trace");
  return t;
}
