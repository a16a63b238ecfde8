import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import type { PublicConfig } from "../../shared/schemas/auth";
import { devMailEnabled, fromLoopback } from "./dev-mail";

/**
 * What the client needs before anyone signs in. (`GET /api/me` and `GET /api/session` live in
 * health.ts.) The demo accounts come from ctx.demo, which the entry point fills when DEMO is on.
 */
export function accountRoutes(ctx: AppContext, _auth: Auth): Router {
  const r = Router();
  r.get("/config", (req, res) => {
    const demo = ctx.env.DEMO ? ctx.demo : null;
    const body: PublicConfig = {
      demo: ctx.env.DEMO,
      demoPassword: demo?.password ?? null,
      demoSignIns: demo?.signIns ?? [],
      // the inbox answers loopback clients only, so only they are shown its link
      devMail: devMailEnabled(ctx) && fromLoopback(req),
    };
    res.json(body);
  });
  return r;
}
