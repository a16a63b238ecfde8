import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseBody } from "../http/validate";
import { payoutRunSchema } from "../../shared/schemas/queue";
import type { PayoutOverviewView, PayoutRunView } from "../../shared/views/money";
import { getEarnings, payoutOverview, runPayouts } from "../payments/payouts";

/** The expert's earnings page and the admin's payouts. */
export function earningsRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();
  r.get("/earnings", async (req, res) => {
    const actor = await requireActor(req, auth, ["expert"]);
    res.json(await getEarnings(ctx, actor.id));
  });
  r.get("/admin/payouts", async (req, res) => {
    await requireActor(req, auth, ["admin"]);
    res.json({ experts: await payoutOverview(ctx) } satisfies PayoutOverviewView);
  });
  r.post("/admin/payouts", async (req, res) => {
    const body = parseBody(payoutRunSchema, req);
    const actor = await requireActor(req, auth, ["admin"]);
    const payouts = await runPayouts(ctx, actor.id, body.expertId);
    const view: PayoutRunView = {
      payouts: payouts.map((p) => ({
        id: p.id,
        expertId: p.expertId,
        amountCents: p.amountCents,
        currency: p.currency,
        status: p.status,
        transferId: p.stripeTransferId,
        failureMessage: p.failureMessage,
      })),
    };
    res.json(view);
  });
  return r;
}
