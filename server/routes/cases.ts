import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import type { Actor } from "../auth/session";
import { requireActor } from "../auth/session";
import { assertCanCreateCase, caseListScope } from "../auth/policies/cases";
import { parseBody, parseParams, parseQuery } from "../http/validate";
import { caseDraftSchema, caseListQuerySchema, casePatchSchema } from "../../shared/schemas/case";
import { idParamSchema } from "../../shared/schemas/traces";
import { createCase, listCases, patchCase, presentCase } from "../services/cases";
import { caseComparison, listTraces, presentTrace, tracesOfCase } from "../services/traces";
import { listPhotos, presentPhoto } from "../services/photos";
import { historyView, viewableCase } from "../workflow/queries";
import type { CaseRow } from "../workflow/records";

/** The case as every reader gets it: vehicle, decoded VIN, codes, traces, photos, comparison, abilities. */
export async function caseDetail(ctx: AppContext, actor: Actor, c: CaseRow) {
  const { traces, photos } = await ctx.db.read(async (tx) => ({
    traces: await tracesOfCase(tx, c.id),
    photos: await listPhotos(tx, c.id),
  }));
  return presentCase(c, actor, {
    traces: traces.map(presentTrace),
    photos: photos.map(presentPhoto),
    comparison: caseComparison(traces),
  });
}

/**
 * /api/cases: create a draft, read one, patch a draft, list the shop's cases, read the history.
 * Each handler: validate → authenticate → authorize (the case policy) → service → present.
 */
export function caseRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();

  r.post("/cases", async (req, res) => {
    const input = parseBody(caseDraftSchema, req);
    const actor = await requireActor(req, auth);
    assertCanCreateCase(actor);
    res.status(201).json(await caseDetail(ctx, actor, await createCase(ctx, actor, input)));
  });

  r.get("/cases", async (req, res) => {
    const q = parseQuery(caseListQuerySchema, req);
    const actor = await requireActor(req, auth);
    res.json(await listCases(ctx, actor, caseListScope(actor), q));
  });

  r.get("/cases/:id", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    res.json(await caseDetail(ctx, actor, await viewableCase(ctx, actor, id)));
  });

  r.patch("/cases/:id", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const patch = parseBody(casePatchSchema, req);
    const actor = await requireActor(req, auth);
    res.json(await caseDetail(ctx, actor, await patchCase(ctx, actor, id, patch)));
  });

  /** The case's history (the same as GET …/history, without the status). */
  r.get("/cases/:id/events", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    res.json({ items: (await historyView(ctx, actor, id)).items });
  });

  r.get("/cases/:id/comparison", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    const c = await viewableCase(ctx, actor, id);
    res.json({ comparison: caseComparison(await listTraces(ctx, c.id)) });
  });

  return r;
}
