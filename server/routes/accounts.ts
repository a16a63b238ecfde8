import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import type { PublicConfig } from "../../shared/schemas/auth";
import { DEMO_PASSWORD, DEMO_SIGN_INS } from "../../demo/sign-ins";
import { fromLoopback } from "./dev-mail";

/** What the client needs before anyone signs in. (`GET /api/me` lives in health.ts.) */
export function accountRoutes(ctx: AppContext, _auth: Auth): Router {
  const r = Router();
  r.get("/config", (req, res) => {
    const demo = ctx.env.DEMO;
    const body: PublicConfig = {
      demo,
      demoPassword: demo ? DEMO_PASSWORD : null,
      demoSignIns: demo ? DEMO_SIGN_INS : [],
      // the inbox answers loopback clients only, so only they are shown its link
      devMail: devMailEnabled(ctx) && fromLoopback(req),
    };
    res.json(body);
  });
  return r;
}

/** The development inbox exists outside production when no real SMTP server is configured. */
export const devMailEnabled = (ctx: AppContext) => ctx.env.NODE_ENV !== "production" && !ctx.env.SMTP_HOST;
