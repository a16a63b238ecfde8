import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseBody, parseParams, parseQuery } from "../http/validate";
import { paymentQuerySchema, submitCaseSchema } from "../../shared/schemas/queue";
import { idParamSchema } from "../../shared/schemas/traces";
import { readPublicPricing } from "../services/pricing";
import { submitCase } from "../workflow/commands/submit";
import { withdrawCase } from "../workflow/commands/withdraw";
import { refreshPayment } from "../workflow/commands/payment-events";
import { paymentToRefresh, paymentView } from "../workflow/queries";

/** Submitting (paying for) a case, its payment's state, withdrawing it, and the public price list. */
export function submitRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();

  /** The active tiers with price and deadline, shown before paying. */
  r.get("/pricing", async (req, res) => {
    await requireActor(req, auth);
    res.json(await readPublicPricing(ctx));
  });

  r.post("/cases/:id/submit", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const body = parseBody(submitCaseSchema, req);
    const actor = await requireActor(req, auth);
    res.status(201).json(await submitCase(ctx, actor, id, body.tier));
  });

  /** The case's current payment (the shop and admins); `?sync=1` asks the payment service first. */
  r.get("/cases/:id/payment", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const q = parseQuery(paymentQuerySchema, req);
    const actor = await requireActor(req, auth);
    const open = q.sync === "1" ? await paymentToRefresh(ctx, actor, id) : null;
    if (open) {
      await refreshPayment(ctx, open).catch((err: unknown) => req.log?.warn({ err }, "payment sync failed"));
    }
    res.json(await paymentView(ctx, actor, id));
  });

  r.post("/cases/:id/withdraw", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    res.json(await withdrawCase(ctx, actor, id));
  });

  return r;
}
