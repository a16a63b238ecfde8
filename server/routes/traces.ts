import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { assertCanDeleteTrace } from "../auth/policies/traces";
import { parseParams, parseQuery } from "../http/validate";
import { idParamSchema, traceWindowQuerySchema } from "../../shared/schemas/traces";
import { getCaseRow, type CaseRow } from "../workflow/records";
import { viewableCase } from "../workflow/queries";
import { traceForWindow } from "../services/trace-access";
import { deleteTrace, getTraceRow, presentTrace, traceWindow, type TraceRow } from "../services/traces";

/**
 * Traces: metadata, min/max windows, removal while draft (uploads and the original file:
 * server/routes/uploads.ts). Another tenant's trace answers 404 like a missing one.
 */
export function traceRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();
  /** The trace and its case, or 404 when either is missing or the actor may not see the case. */
  const loadReadable = async (actorCheck: (c: CaseRow | undefined) => void, id: string): Promise<TraceRow> => {
    const t = await getTraceRow(ctx, id);
    actorCheck(t ? await ctx.db.read((tx) => getCaseRow(tx, t.caseId)) : undefined);
    return t!;
  };

  r.get("/traces/:id", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    const t = await getTraceRow(ctx, id);
    await viewableCase(ctx, actor, t?.caseId ?? "", "Trace");
    res.json(presentTrace(t!));
  });

  /** The min/max window: the case's viewers, or readers of the casebook entry the trace was published with. */
  r.get("/traces/:id/window", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const q = parseQuery(traceWindowQuerySchema, req);
    const actor = await requireActor(req, auth);
    const t = await traceForWindow(ctx, actor, id);
    const w = await traceWindow(ctx, t, q);
    res.set("Cache-Control", "private, max-age=3600");
    res.json(w);
  });

  r.delete("/traces/:id", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    const t = await loadReadable((c) => assertCanDeleteTrace(actor, c), id);
    await deleteTrace(ctx, actor, t);
    res.status(204).end();
  });

  return r;
}
