import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseBody } from "../http/validate";
import { answerSchema, confirmSchema } from "../../shared/schemas/queue";
import { answerCase, confirmCase, listAnswers } from "../services/answers";
import { loadCase } from "../services/case-state";
import { assertCanSeeCase, expertProfileOf } from "../auth/policies/queue";
import { forbidden } from "../http/errors";

/** The expert's answer (captures the held payment) and the shop's confirmation. */
export function answerRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();

  r.post("/cases/:id/answer", async (req, res) => {
    const body = parseBody(answerSchema, req);
    const actor = await requireActor(req, auth);
    const out = await answerCase(ctx, actor, String(req.params.id), body);
    res.status(201).json({ id: out.case.id, status: out.case.status, captured: out.captured, answer: out.answer });
  });

  r.post("/cases/:id/confirm", async (req, res) => {
    const body = parseBody(confirmSchema, req);
    const actor = await requireActor(req, auth);
    const out = await confirmCase(ctx, actor, String(req.params.id), body);
    res.json({ id: out.case.id, status: out.case.status, outcome: out.outcome });
  });

  r.get("/cases/:id/answers", async (req, res) => {
    const actor = await requireActor(req, auth);
    const c = loadCase(ctx.db, String(req.params.id));
    assertCanSeeCase(actor, c, expertProfileOf(ctx.db, actor));
    const mayRead = actor.role === "admin" || actor.role === "technician" || actor.role === "owner" || (actor.role === "expert" && c.expertId === actor.id);
    if (!mayRead) throw forbidden("Answers are for the shop and the expert on the case.");
    res.json(listAnswers(ctx, c.id));
  });

  return r;
}
