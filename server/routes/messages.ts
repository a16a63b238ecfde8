import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseParams, parseQuery } from "../http/validate";
import { idParamSchema } from "../../shared/schemas/traces";
import { sinceQuerySchema } from "../../shared/schemas/realtime";
import { messagesSince } from "../services/messages";

/** `GET /api/cases/:id/messages?since=` — the REST mirror of a case's chat: messages with seq > since, in seq order. */
export function messageRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();
  r.get("/cases/:id/messages", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const { since } = parseQuery(sinceQuerySchema, req);
    const actor = await requireActor(req, auth);
    const out = await messagesSince(ctx, actor, id, since ?? 0);
    res.set("Cache-Control", "private, no-store");
    res.json(out);
  });
  return r;
}
