import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseBody } from "../http/validate";
import { pricingUpdateSchema } from "../../shared/schemas/queue";
import { readPricing, updatePricing } from "../services/pricing";

/** GET/PUT /api/admin/pricing: tiers (integer cents, deadline minutes), the desk's share in basis points, queue timings. */
export function adminPricingRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();
  r.get("/admin/pricing", async (req, res) => {
    await requireActor(req, auth, ["admin"]);
    res.json(await readPricing(ctx));
  });
  r.put("/admin/pricing", async (req, res) => {
    const body = parseBody(pricingUpdateSchema, req);
    const actor = await requireActor(req, auth, ["admin"]);
    res.json(await updatePricing(ctx, actor, body));
  });
  return r;
}
