import { Router } from "express";
import { z } from "zod";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseBody, parseQuery } from "../http/validate";
import { submitCaseSchema } from "../../shared/schemas/queue";
import { currentPayment, presentPayment, reconcilePayment, startCheckout } from "../services/payments-flow";
import { withdrawCase } from "../services/queue";
import { publicPricing } from "../services/pricing";
import { loadCase } from "../services/case-state";
import { assertCanSeeCase, expertProfileOf } from "../auth/policies/queue";

/** Submitting (paying for) a case, its payment's state, withdrawing it, and the public price list. */
export function submitRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();

  /** The active tiers with price and deadline, shown before paying. */
  r.get("/pricing", async (req, res) => {
    await requireActor(req, auth);
    res.json(publicPricing(ctx.db, ctx.now()));
  });

  r.post("/cases/:id/submit", async (req, res) => {
    const body = parseBody(submitCaseSchema, req);
    const actor = await requireActor(req, auth);
    const started = await startCheckout(ctx, actor, String(req.params.id), body.tier);
    res.status(201).json(started);
  });

  /** The case's current payment; `?sync=1` asks Stripe first (for a return from checkout before the webhook). */
  r.get("/cases/:id/payment", async (req, res) => {
    const q = parseQuery(z.object({ sync: z.enum(["0", "1"]).optional() }), req);
    const actor = await requireActor(req, auth);
    const c = loadCase(ctx.db, String(req.params.id));
    assertCanSeeCase(actor, c, expertProfileOf(ctx.db, actor));
    let p = currentPayment(ctx.db, c.id);
    if (p && q.sync === "1" && (p.status === "pending" || p.status === "failed")) {
      try {
        p = (await reconcilePayment(ctx, p.id)) ?? p;
      } catch (err) {
        req.log?.warn({ err }, "payment sync failed");
      }
    }
    const fresh = loadCase(ctx.db, c.id)!;
    res.json({ caseId: c.id, status: fresh.status, deadlineAt: fresh.deadlineAt?.toISOString() ?? null, payment: p ? presentPayment(p) : null });
  });

  r.post("/cases/:id/withdraw", async (req, res) => {
    const actor = await requireActor(req, auth);
    const row = await withdrawCase(ctx, actor, String(req.params.id));
    const p = currentPayment(ctx.db, row.id);
    res.json({ id: row.id, status: row.status, payment: p ? presentPayment(p) : null });
  });

  return r;
}
