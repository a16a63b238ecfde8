import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseBody, parseParams, parseQuery } from "../http/validate";
import { notFound } from "../http/errors";
import { idParamSchema, traceWindowQuerySchema } from "../../shared/schemas/traces";
import {
  casebookEditSchema,
  casebookSearchQuerySchema,
  casebookVoteSchema,
  similarQuerySchema,
} from "../../shared/schemas/casebook";
import { getTraceRow, traceWindow } from "../services/traces";
import { searchCasebook, warmCasebookSearch } from "../services/casebook-search";
import { viewableCase } from "../workflow/queries";
import {
  editEntry,
  entryTrace,
  expertRecord,
  listHiddenEntries,
  readEntry,
  similarForCase,
  voteEntry,
  withHelpfulCounts,
} from "../services/casebook";
import { similarIndex } from "../services/similar";
import { z } from "zod";

const entryTraceParams = z.object({ id: idParamSchema.shape.id, traceId: idParamSchema.shape.id });

/**
 * The casebook: search, entries (read-only traces, measurements, annotations), helpful votes,
 * moderation, an expert's record, and similar cases for a case. Every signed-in role may search
 * and read; the rules are in server/auth/policies/casebook.ts.
 */
export function casebookRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();
  if (ctx.env.NODE_ENV !== "test") {
    // load the search worker's arrays and the similar-case vectors before the first request needs them
    setTimeout(() => {
      void warmCasebookSearch(ctx).catch((err) => ctx.logger.warn({ err }, "casebook search warm-up failed"));
      similarIndex(ctx.db).catch((err) => ctx.logger.warn({ err }, "similar-case index warm-up failed"));
    }, 2000).unref();
  }

  r.get("/casebook/search", async (req, res) => {
    const q = parseQuery(casebookSearchQuerySchema, req);
    await requireActor(req, auth);
    const out = await searchCasebook(ctx, q);
    res.json({ ...out, results: await ctx.db.read((tx) => withHelpfulCounts(tx, out.results)) });
  });

  r.get("/casebook/:id", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    res.json(await readEntry(ctx, actor, id));
  });

  r.post("/casebook/:id/vote", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const { helpful } = parseBody(casebookVoteSchema, req);
    const actor = await requireActor(req, auth);
    res.json(await voteEntry(ctx, actor, id, helpful));
  });

  /** The min/max window of one of an entry's published traces (the samples only). */
  r.get("/casebook/:id/traces/:traceId/window", async (req, res) => {
    const { id, traceId } = parseParams(entryTraceParams, req);
    const q = parseQuery(traceWindowQuerySchema, req);
    const actor = await requireActor(req, auth);
    await entryTrace(ctx, actor, id, traceId);
    const t = await getTraceRow(ctx, traceId);
    if (!t) throw notFound("Trace");
    res.set("Cache-Control", "private, max-age=3600");
    res.json(await traceWindow(ctx, t, q));
  });

  r.get("/cases/:id/similar", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const { limit } = parseQuery(similarQuerySchema, req);
    const actor = await requireActor(req, auth);
    const c = await viewableCase(ctx, actor, id);
    res.json(await similarForCase(ctx, c.id, limit));
  });

  r.get("/admin/casebook/hidden", async (req, res) => {
    const actor = await requireActor(req, auth);
    res.json({ items: await listHiddenEntries(ctx, actor) });
  });

  r.patch("/admin/casebook/:id", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const patch = parseBody(casebookEditSchema, req);
    const actor = await requireActor(req, auth);
    res.json(await editEntry(ctx, actor, id, patch));
  });

  r.get("/experts/:id/record", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    res.json(await expertRecord(ctx, actor, id));
  });

  return r;
}
