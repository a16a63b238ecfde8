import { Router } from "express";
import { sql } from "drizzle-orm";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { getActor, requireActor, type Actor } from "../auth/session";
import { healthAnswer } from "../readiness";
import type { Me } from "../../shared/schemas/auth";

const present = (a: Actor): Me => ({ id: a.id, email: a.email, name: a.name, role: a.role, shopId: a.shopId });

/**
 * Health: `/health` is readiness (200 only once everything the server serves is in place, 503 with
 * what is pending before that and while stopping), `/health/live` is liveness (200 while the
 * process answers). The session probe `/session` answers 200 signed in or not; `/me` is a
 * protected route and answers 401 when signed out.
 */
export function healthRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();
  r.get("/health", async (_req, res) => {
    res.set("Cache-Control", "no-store");
    const { status, body } = healthAnswer(ctx.readiness.state());
    if (status !== 200) {
      res.set("Retry-After", "1");
      return res.status(status).json(body);
    }
    try {
      await ctx.db.read((tx) => tx.all(sql`select 1 as ok`));
      res.json(body);
    } catch {
      res
        .status(503)
        .json({ ok: false, ready: false, error: { code: "db_unavailable", message: "The database does not answer." } });
    }
  });
  r.get("/health/live", (_req, res) => {
    res.set("Cache-Control", "no-store").json({ ok: true, live: true });
  });
  r.get("/me", async (req, res) => {
    const actor = await requireActor(req, auth);
    res.json(present(actor));
  });
  r.get("/session", async (req, res) => {
    const actor = await getActor(req, auth);
    res.set("Cache-Control", "no-store").json({ user: actor ? present(actor) : null });
  });
  return r;
}
