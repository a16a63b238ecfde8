import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import type { Actor } from "../auth/session";
import { requireActor } from "../auth/session";
import { assertCanViewCase } from "../auth/policies/queue";
import { assertCanCreateCase, assertCanReadCase, assertCaseAction, caseListScope } from "../auth/policies/cases";
import { parseBody, parseParams, parseQuery } from "../http/validate";
import { caseDraftSchema, caseListQuerySchema, casePatchSchema } from "../../shared/schemas/case";
import { idParamSchema } from "../../shared/schemas/traces";
import { createCase, getCaseRow, listCaseEvents, listCases, patchCase, presentCase, type CaseRow } from "../services/cases";
import { caseComparison, listTraces, presentTrace } from "../services/traces";
import { listPhotos, presentPhoto } from "../services/photos";

/** The case as every reader gets it: vehicle, decoded VIN, codes, traces, photos, comparison, abilities. */
export function caseDetail(ctx: AppContext, actor: Actor, c: CaseRow) {
  const traces = listTraces(ctx, c.id);
  return presentCase(c, actor, {
    traces: traces.map(presentTrace),
    photos: listPhotos(ctx, c.id).map(presentPhoto),
    comparison: caseComparison(traces),
  });
}

/**
 * /api/cases: create a draft, read one, patch a draft, list the shop's cases, read the history.
 * Each handler: validate → authenticate → authorize (server/auth/policies/cases.ts) → service → present.
 */
export function caseRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();

  r.post("/cases", async (req, res) => {
    const input = parseBody(caseDraftSchema, req);
    const actor = await requireActor(req, auth);
    assertCanCreateCase(actor);
    const row = createCase(ctx, actor, input);
    res.status(201).json(caseDetail(ctx, actor, row));
  });

  r.get("/cases", async (req, res) => {
    const q = parseQuery(caseListQuerySchema, req);
    const actor = await requireActor(req, auth);
    res.json(listCases(ctx, caseListScope(actor), q));
  });

  r.get("/cases/:id", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    const row = getCaseRow(ctx.db, id);
    assertCanViewCase(ctx.db, actor, row);
    res.json(caseDetail(ctx, actor, row));
  });

  r.patch("/cases/:id", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const patch = parseBody(casePatchSchema, req);
    const actor = await requireActor(req, auth);
    // No await between the check and the write: nothing else can change the case in between.
    const row = getCaseRow(ctx.db, id);
    assertCaseAction(actor, row, "edit");
    const updated = patchCase(ctx, actor, row, patch);
    res.json(caseDetail(ctx, actor, updated));
  });

  r.get("/cases/:id/events", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    const row = getCaseRow(ctx.db, id);
    assertCanReadCase(actor, row);
    res.json({ items: listCaseEvents(ctx.db, row.id) });
  });

  r.get("/cases/:id/comparison", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    const row = getCaseRow(ctx.db, id);
    assertCanViewCase(ctx.db, actor, row);
    res.json({ comparison: caseComparison(listTraces(ctx, row.id)) });
  });

  return r;
}
