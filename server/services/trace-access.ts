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

export function traceForWindow(ctx: AppContext, actor: Actor, traceId: string): TraceRow {
  const t = getTraceRow(ctx, traceId);
  if (!t) throw notFound("Trace");
  const c = getCaseRow(ctx.db, t.caseId);
  if (!mayReadTraceWindow(actor, expertProfileOf(ctx.db, actor), c, publishedEntryOfTrace(ctx.db, t.id)))
    throw notFound("Trace");
  return t;
}
