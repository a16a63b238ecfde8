import { Router } from "express";
import { z } from "zod";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseBody, parseQuery } from "../http/validate";
import { refundSchema } from "../../shared/schemas/queue";
import { currentPayment, presentPayment, receiptFor, refundPayment, releaseHold, shopBilling } from "../services/payments-flow";
import { ledgerBalance, ledgerForCase } from "../services/ledger";
import { loadCase, transitionCase, announceCase } from "../services/case-state";
import { assertQueueAction } from "../auth/policies/queue";
import { badRequest, conflict, forbidden } from "../http/errors";

/** The owner's billing and receipts; the admin's refunds and ledger. */
export function billingRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();

  r.get("/billing", async (req, res) => {
    const q = parseQuery(z.object({ shopId: z.string().optional() }), req);
    const actor = await requireActor(req, auth, ["owner", "admin"]);
    const shopId = actor.role === "admin" ? q.shopId : actor.shopId;
    if (!shopId) throw badRequest("shop_required", "Name the shop: ?shopId=…");
    res.json(shopBilling(ctx, shopId));
  });

  r.get("/billing/receipts/:paymentId", async (req, res) => {
    const actor = await requireActor(req, auth, ["owner", "admin"]);
    if (actor.role === "owner" && !actor.shopId) throw forbidden();
    res.json(receiptFor(ctx, actor.role === "admin" ? null : actor.shopId, String(req.params.paymentId)));
  });

  /** Refund a case (admin): a held payment is cancelled (the case becomes refunded); a captured one is refunded. */
  r.post("/admin/cases/:id/refund", async (req, res) => {
    const body = parseBody(refundSchema, req);
    const actor = await requireActor(req, auth, ["admin"]);
    const c = loadCase(ctx.db, String(req.params.id));
    assertQueueAction(actor, c, null, "refund");
    const p = currentPayment(ctx.db, c.id);
    if (!p || (p.status !== "authorized" && p.status !== "captured")) throw conflict("not_refundable", "There is no held or captured payment on this case.");
    if (p.status === "authorized") {
      if (c.status === "queued" || c.status === "claimed" || c.status === "needs_data") {
        const now = ctx.now();
        ctx.db.transaction((tx) => transitionCase(tx, { caseId: c.id, from: c.status as "queued", to: "refunded", actorId: actor.id, type: "refunded_by_desk", at: now, data: { reason: body.reason ?? null } }));
        announceCase(ctx, c.id);
      }
      await releaseHold(ctx, p.id, "requested_by_customer");
    } else {
      await refundPayment(ctx, p.id, body.reason);
    }
    const fresh = loadCase(ctx.db, c.id)!;
    res.json({ id: c.id, status: fresh.status, payment: presentPayment(currentPayment(ctx.db, c.id)!), balance: ledgerBalance(ctx.db, c.id) });
  });

  r.get("/admin/ledger", async (req, res) => {
    const q = parseQuery(z.object({ caseId: z.string().optional() }), req);
    await requireActor(req, auth, ["admin"]);
    res.json({ balance: ledgerBalance(ctx.db, q.caseId ?? "all"), entries: q.caseId ? ledgerForCase(ctx.db, q.caseId) : undefined });
  });

  return r;
}
