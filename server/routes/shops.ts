import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { shopPolicy, userPolicy } from "../auth/policies/index";
import { rateLimit } from "../auth/rate-limit";
import { parseBody, parseParams } from "../http/validate";
import { HttpError, notFound } from "../http/errors";
import {
  acceptInviteSchema,
  invitePreviewSchema,
  inviteTechnicianSchema,
  shopSignUpSchema,
} from "../../shared/schemas/auth";
import { z } from "zod";
import { findUserById } from "../services/accounts";
import * as shops from "../services/shops";
import type { Role } from "../../shared/domain/case-status";

const shopParams = z.object({ shopId: z.string().min(1).max(64) });
const memberParams = shopParams.extend({ userId: z.string().min(1).max(64) });
const inviteParams = shopParams.extend({ inviteId: z.string().min(1).max(64) });

/** Shops (tenants): owner sign-up, the team, invitations. */
export function shopRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();

  r.post("/shops/sign-up", rateLimit(ctx, "shops/sign-up", { window: 600, max: 5 }), async (req, res) => {
    const input = parseBody(shopSignUpSchema, req);
    res.status(202).json(await shops.signUpShopOwner(ctx, input));
  });

  const loadShop = async (shopId: string) => {
    const shop = await shops.getShop(ctx, shopId);
    if (!shop) throw notFound("Shop");
    return shop;
  };

  r.get("/shops/:shopId", async (req, res) => {
    const { shopId } = parseParams(shopParams, req);
    const actor = await requireActor(req, auth);
    const shop = await loadShop(shopId);
    shopPolicy.authorize(actor, "view", shop);
    res.json({
      shop: { id: shop.id, name: shop.name, createdAt: shop.createdAt.toISOString() },
      abilities: shopPolicy.abilities(actor, shop),
    });
  });

  r.get("/shops/:shopId/team", async (req, res) => {
    const { shopId } = parseParams(shopParams, req);
    const actor = await requireActor(req, auth);
    const shop = await loadShop(shopId);
    shopPolicy.authorize(actor, "listMembers", shop);
    const members = (await shops.listMembers(ctx, shop.id)).map((m) => ({
      id: m.id,
      name: m.name,
      email: m.email,
      role: m.role as Role,
      joinedAt: m.createdAt.toISOString(),
      abilities: userPolicy.abilities(actor, {
        id: m.id,
        role: m.role as Role,
        shopId: m.shopId,
        deactivatedAt: m.deactivatedAt,
      }),
    }));
    const invites = shopPolicy.can(actor, "invite", shop)
      ? (await shops.listPendingInvites(ctx, shop.id)).map(shops.presentInvite)
      : [];
    res.json({
      shop: { id: shop.id, name: shop.name },
      members,
      invites,
      abilities: shopPolicy.abilities(actor, shop),
    });
  });

  r.post("/shops/:shopId/invites", async (req, res) => {
    const { shopId } = parseParams(shopParams, req);
    const input = parseBody(inviteTechnicianSchema, req);
    const actor = await requireActor(req, auth);
    const shop = await loadShop(shopId);
    shopPolicy.authorize(actor, "invite", shop);
    try {
      const { invite } = await shops.createInvite(ctx, actor, shop, input);
      res.status(201).json({ invite });
    } catch (err) {
      // RFC 6585 §4: a 429 may say how long to wait (Retry-After, RFC 9110 §10.2.3)
      const limited = err instanceof HttpError && err.status === 429;
      const wait = limited ? (err.details as { retryAfterSeconds?: number })?.retryAfterSeconds : undefined;
      if (wait) res.set("Retry-After", String(wait));
      throw err;
    }
  });

  r.delete("/shops/:shopId/invites/:inviteId", async (req, res) => {
    const { shopId, inviteId } = parseParams(inviteParams, req);
    const actor = await requireActor(req, auth);
    const shop = await loadShop(shopId);
    shopPolicy.authorize(actor, "invite", shop);
    await shops.revokeInvite(ctx, shop.id, inviteId);
    res.status(204).end();
  });

  r.delete("/shops/:shopId/members/:userId", async (req, res) => {
    const { shopId, userId } = parseParams(memberParams, req);
    const actor = await requireActor(req, auth);
    const shop = await loadShop(shopId);
    shopPolicy.authorize(actor, "removeMember", shop);
    const target = await findUserById(ctx, userId);
    if (!target || target.shopId !== shop.id || target.deactivatedAt) throw notFound("Team member");
    userPolicy.authorize(actor, "remove", {
      id: target.id,
      role: target.role as Role,
      shopId: target.shopId,
      deactivatedAt: target.deactivatedAt,
    });
    await shops.removeMember(ctx, target.id);
    res.status(204).end();
  });

  r.post("/invites/preview", rateLimit(ctx, "invites/preview", { window: 600, max: 30 }), async (req, res) => {
    const { token } = parseBody(invitePreviewSchema, req);
    const found = await shops.findUsableInvite(ctx, token);
    if (!found) throw new HttpError(404, "invite_invalid", shops.INVITE_GONE);
    res.json({
      email: found.invite.email,
      name: found.invite.name,
      shopName: found.shopName,
      expiresAt: found.invite.expiresAt.toISOString(),
    });
  });

  r.post("/invites/accept", rateLimit(ctx, "invites/accept", { window: 600, max: 10 }), async (req, res) => {
    const input = parseBody(acceptInviteSchema, req);
    const done = await shops.acceptInvite(ctx, input);
    res.status(201).json({
      ok: true,
      email: done.email,
      message: "Your account is ready. Sign in with your e-mail address and the password you chose.",
    });
  });

  return r;
}
