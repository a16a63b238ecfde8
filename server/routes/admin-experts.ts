import { Router } from "express";
import { z } from "zod";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { expertPolicy } from "../auth/policies/index";
import { parseBody, parseParams, parseQuery } from "../http/validate";
import { notFound } from "../http/errors";
import { expertDecisionSchema, expertListQuerySchema, type ExpertStatus } from "../../shared/schemas/auth";
import * as experts from "../services/experts";

const idParams = z.object({ userId: z.string().min(1).max(64) });

/** The desk reviews expert applications. */
export function adminExpertRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();

  r.get("/admin/experts", async (req, res) => {
    const { status } = parseQuery(expertListQuerySchema, req);
    const actor = await requireActor(req, auth);
    expertPolicy.authorize(actor, "list", null);
    const rows = await experts.listExperts(ctx, status);
    res.json({
      experts: rows.map((row) => ({
        ...experts.presentProfile(row.profile),
        name: row.name,
        email: row.email,
        emailVerified: row.emailVerified,
        abilities: expertPolicy.abilities(actor, {
          userId: row.profile.userId,
          status: row.profile.status as ExpertStatus,
        }),
      })),
    });
  });

  for (const [verb, decision] of [
    ["approve", "approved"],
    ["reject", "rejected"],
  ] as const) {
    r.post(`/admin/experts/:userId/${verb}`, async (req, res) => {
      const { userId } = parseParams(idParams, req);
      const { note } = parseBody(expertDecisionSchema, req);
      const actor = await requireActor(req, auth);
      expertPolicy.authorize(actor, "list", null);
      const profile = await experts.getExpertProfile(ctx, userId);
      if (!profile) throw notFound("Expert");
      const resource = { userId, status: profile.status as ExpertStatus };
      expertPolicy.authorize(actor, "decide", resource);
      const updated = await experts.decideExpert(ctx, actor, userId, decision, note);
      res.json({
        profile: experts.presentProfile(updated),
        abilities: expertPolicy.abilities(actor, { userId, status: updated.status as ExpertStatus }),
      });
    });
  }

  return r;
}
