import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseParams, parseQuery } from "../http/validate";
import { idParamSchema } from "../../shared/schemas/traces";
import { sinceQuerySchema } from "../../shared/schemas/realtime";
import { annotationsSince } from "../services/annotations";

/**
 * `GET /api/cases/:id/annotations?since=` — the REST mirror of a case's marks: those with seq >
 * since in seq order (tombstones included when since > 0), and the case's current seq.
 */
export function annotationRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();
  r.get("/cases/:id/annotations", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const { since } = parseQuery(sinceQuerySchema, req);
    const actor = await requireActor(req, auth);
    const out = await annotationsSince(ctx, actor, id, since ?? 0);
    res.set("Cache-Control", "private, no-store");
    res.json(out);
  });
  return r;
}
