import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseBody, parseParams } from "../http/validate";
import { availabilitySchema, dataSentSchema, requestDataSchema } from "../../shared/schemas/queue";
import { idParamSchema } from "../../shared/schemas/traces";
import type { AvailabilityView } from "../../shared/views/workflow";
import { setOwnAvailability } from "../services/experts";
import { claimCase, releaseCase } from "../workflow/commands/claim";
import { markDataSent, requestData } from "../workflow/commands/data";
import { historyView, presentCaseState, queueView, workflowView } from "../workflow/queries";

/** The expert's queue, claims and releases, requests for more data, and a case's history and workflow. */
export function queueRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();

  r.get("/queue", async (req, res) => {
    const actor = await requireActor(req, auth);
    res.json(await queueView(ctx, actor));
  });

  r.put("/queue/availability", async (req, res) => {
    const body = parseBody(availabilitySchema, req);
    const actor = await requireActor(req, auth, ["expert"]);
    const profile = await setOwnAvailability(ctx, actor, body.available);
    res.json({ available: profile.available } satisfies AvailabilityView);
  });

  r.post("/cases/:id/claim", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    res.json(presentCaseState(await claimCase(ctx, actor, id)));
  });

  r.post("/cases/:id/release", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    res.json(presentCaseState(await releaseCase(ctx, actor, id)));
  });

  r.post("/cases/:id/request-data", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const body = parseBody(requestDataSchema, req);
    const actor = await requireActor(req, auth);
    res.json(presentCaseState(await requestData(ctx, actor, id, body.message)));
  });

  r.post("/cases/:id/data-sent", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const body = parseBody(dataSentSchema, req);
    const actor = await requireActor(req, auth);
    res.json(presentCaseState(await markDataSent(ctx, actor, id, body.note)));
  });

  r.get("/cases/:id/history", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    res.json(await historyView(ctx, actor, id));
  });

  /** Everything the case page needs for the paid workflow, with the actor's abilities. */
  r.get("/cases/:id/workflow", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    res.json(await workflowView(ctx, actor, id));
  });

  return r;
}
