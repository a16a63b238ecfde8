import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseBody, parseParams, parseQuery } from "../http/validate";
import { badRequest, forbidden } from "../http/errors";
import {
  billingQuerySchema,
  ledgerQuerySchema,
  reassignSchema,
  receiptParamsSchema,
  refundSchema,
} from "../../shared/schemas/queue";
import { idParamSchema } from "../../shared/schemas/traces";
import { receiptFor, shopBilling } from "../payments/views";
import { ledgerView } from "../payments/ledger";
import { refundCase } from "../workflow/commands/refund";
import { reassignCase } from "../workflow/commands/claim";
import { presentCaseState } from "../workflow/queries";

/** The owner's billing and receipts; the desk's refunds, reassignments and ledger. */
export function billingRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();

  r.get("/billing", async (req, res) => {
    const q = parseQuery(billingQuerySchema, req);
    const actor = await requireActor(req, auth, ["owner", "admin"]);
    const shopId = actor.role === "admin" ? q.shopId : actor.shopId;
    if (!shopId) throw badRequest("shop_required", "Name the shop: ?shopId=…");
    res.json(await shopBilling(ctx, shopId));
  });

  r.get("/billing/receipts/:paymentId", async (req, res) => {
    const { paymentId } = parseParams(receiptParamsSchema, req);
    const actor = await requireActor(req, auth, ["owner", "admin"]);
    if (actor.role === "owner" && !actor.shopId) throw forbidden();
    res.json(await receiptFor(ctx, actor.role === "admin" ? null : actor.shopId, paymentId));
  });

  /** Give a case's money back (admins): 200 only when it really went back, else 409 saying why. */
  r.post("/admin/cases/:id/refund", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const body = parseBody(refundSchema, req);
    const actor = await requireActor(req, auth, ["admin"]);
    res.json(await refundCase(ctx, actor, id, body.reason));
  });

  /** Hand a claimed case to another approved expert (admins). */
  r.post("/admin/cases/:id/reassign", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const body = parseBody(reassignSchema, req);
    const actor = await requireActor(req, auth, ["admin"]);
    res.json(presentCaseState(await reassignCase(ctx, actor, id, body.expertId, body.reason)));
  });

  r.get("/admin/ledger", async (req, res) => {
    const q = parseQuery(ledgerQuerySchema, req);
    await requireActor(req, auth, ["admin"]);
    res.json(await ledgerView(ctx, q.caseId));
  });

  return r;
}
