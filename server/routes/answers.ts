import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseBody, parseParams } from "../http/validate";
import { answerSchema, confirmSchema } from "../../shared/schemas/queue";
import { idParamSchema } from "../../shared/schemas/traces";
import { answerCase, confirmCase } from "../workflow/commands/answer";
import { answersView } from "../workflow/queries";

/** The expert's answer (captures the held payment) and the shop's confirmation. */
export function answerRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();

  r.post("/cases/:id/answer", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const body = parseBody(answerSchema, req);
    const actor = await requireActor(req, auth);
    res.status(201).json(await answerCase(ctx, actor, id, body));
  });

  r.post("/cases/:id/confirm", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const body = parseBody(confirmSchema, req);
    const actor = await requireActor(req, auth);
    res.json(await confirmCase(ctx, actor, id, body));
  });

  r.get("/cases/:id/answers", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    res.json(await answersView(ctx, actor, id));
  });

  return r;
}
