import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { expertPolicy } from "../auth/policies/index";
import { rateLimit } from "../auth/rate-limit";
import { parseBody } from "../http/validate";
import { notFound } from "../http/errors";
import { expertApplicationSchema, expertAvailabilitySchema, type ExpertStatus } from "../../shared/schemas/auth";
import * as experts from "../services/experts";

/** Experts: the application, and an expert's own profile and availability. */
export function expertRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();

  r.post("/experts/apply", rateLimit(ctx, "experts/apply", { window: 600, max: 5 }), async (req, res) => {
    const input = parseBody(expertApplicationSchema, req);
    res.status(202).json(await experts.applyAsExpert(ctx, input));
  });

  const own = async (req: Parameters<typeof requireActor>[0]) => {
    const actor = await requireActor(req, auth, ["expert"]);
    const profile = await experts.getExpertProfile(ctx, actor.id);
    if (!profile) throw notFound("Expert profile");
    return { actor, profile, resource: { userId: profile.userId, status: profile.status as ExpertStatus } };
  };

  r.get("/experts/me", async (req, res) => {
    const { actor, profile, resource } = await own(req);
    expertPolicy.authorize(actor, "view", resource);
    res.json({ profile: experts.presentProfile(profile), abilities: expertPolicy.abilities(actor, resource) });
  });

  r.patch("/experts/me", async (req, res) => {
    const { available } = parseBody(expertAvailabilitySchema, req);
    const { actor, resource } = await own(req);
    const updated = await experts.setOwnAvailability(ctx, actor, available);
    res.json({ profile: experts.presentProfile(updated), abilities: expertPolicy.abilities(actor, resource) });
  });

  return r;
}
