import { Router } from "express";
import { sql } from "drizzle-orm";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";

export function healthRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();
  r.get("/health", (_req, res) => {
    try {
      ctx.db.get(sql`select 1 as ok`);
      res.json({ ok: true });
    } catch {
      res.status(503).json({ error: { code: "db_unavailable", message: "The database does not answer." } });
    }
  });
  r.get("/me", async (req, res) => {
    const actor = await requireActor(req, auth);
    res.json({ id: actor.id, email: actor.email, name: actor.name, role: actor.role, shopId: actor.shopId });
  });
  return r;
}
