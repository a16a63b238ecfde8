import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseBody } from "../http/validate";
import { availabilitySchema, dataSentSchema, requestDataSchema } from "../../shared/schemas/queue";
import { claimCase, listQueue, markDataSent, registerQueueSweeps, releaseCase, requestData, setAvailability } from "../services/queue";
import { caseHistory, loadCase, queueState } from "../services/case-state";
import { currentPayment, presentPayment } from "../services/payments-flow";
import { listAnswers } from "../services/answers";
import { publicPricing } from "../services/pricing";
import { assertCanSeeCase, expertProfileOf, queueAbilities } from "../auth/policies/queue";
import { schema } from "../db/client";
import { eq } from "drizzle-orm";

const caseState = (c: { id: string; status: string; deadlineAt: Date | null; expertId: string | null; claimedAt: Date | null }) => ({
  id: c.id,
  status: c.status,
  deadlineAt: c.deadlineAt?.toISOString() ?? null,
  expertId: c.expertId,
  claimedAt: c.claimedAt?.toISOString() ?? null,
});

/** The expert's queue, claims and releases, requests for more data, and a case's history and workflow. */
export function queueRoutes(ctx: AppContext, auth: Auth): Router {
  registerQueueSweeps();
  const r = Router();

  r.get("/queue", async (req, res) => {
    const actor = await requireActor(req, auth);
    res.json(listQueue(ctx, actor));
  });

  r.put("/queue/availability", async (req, res) => {
    const body = parseBody(availabilitySchema, req);
    const actor = await requireActor(req, auth, ["expert"]);
    res.json(setAvailability(ctx, actor, body.available));
  });

  r.post("/cases/:id/claim", async (req, res) => {
    const actor = await requireActor(req, auth);
    res.json(caseState(await claimCase(ctx, actor, String(req.params.id))));
  });

  r.post("/cases/:id/release", async (req, res) => {
    const actor = await requireActor(req, auth);
    res.json(caseState(await releaseCase(ctx, actor, String(req.params.id))));
  });

  r.post("/cases/:id/request-data", async (req, res) => {
    const body = parseBody(requestDataSchema, req);
    const actor = await requireActor(req, auth);
    res.json(caseState(await requestData(ctx, actor, String(req.params.id), body.message)));
  });

  r.post("/cases/:id/data-sent", async (req, res) => {
    const body = parseBody(dataSentSchema, req);
    const actor = await requireActor(req, auth);
    res.json(caseState(await markDataSent(ctx, actor, String(req.params.id), body.note)));
  });

  r.get("/cases/:id/history", async (req, res) => {
    const actor = await requireActor(req, auth);
    const c = loadCase(ctx.db, String(req.params.id));
    assertCanSeeCase(actor, c, expertProfileOf(ctx.db, actor));
    res.json({ caseId: c.id, status: c.status, items: caseHistory(ctx.db, c.id) });
  });

  /** Everything the case page needs for the paid workflow, with the actor's abilities. */
  r.get("/cases/:id/workflow", async (req, res) => {
    const actor = await requireActor(req, auth);
    const profile = expertProfileOf(ctx.db, actor);
    const c = loadCase(ctx.db, String(req.params.id));
    assertCanSeeCase(actor, c, profile);
    const qs = queueState(ctx.db, c.id, ctx.now());
    const p = currentPayment(ctx.db, c.id);
    const expert = c.expertId ? ctx.db.select({ id: schema.user.id, name: schema.user.name }).from(schema.user).where(eq(schema.user.id, c.expertId)).get() ?? null : null;
    const abilities = queueAbilities(actor, c, profile);
    const isShop = actor.role === "technician" || actor.role === "owner";
    const isExpertOrAdmin = actor.role === "admin" || (actor.role === "expert" && c.expertId === actor.id);
    res.json({
      ...caseState(c),
      tier: c.tier,
      priceCents: c.priceCents,
      expert,
      payment: p && (isShop || actor.role === "admin") ? presentPayment(p) : null,
      paymentMessage: qs.lastPaymentError,
      needsDataMessage: c.status === "needs_data" ? qs.needsDataMessage : null,
      notFixedCount: qs.notFixedCount,
      ...(isShop || isExpertOrAdmin ? listAnswers(ctx, c.id) : { answers: [], confirmations: [] }),
      pricing: abilities.submit ? publicPricing(ctx.db, ctx.now()) : null,
      abilities,
    });
  });

  return r;
}
