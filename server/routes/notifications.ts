import { Router } from "express";
import { z } from "zod";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseQuery } from "../http/validate";
import { listNotifications, markAllNotificationsRead, markNotificationRead } from "../services/notifications";

/** The signed-in user's in-app notifications. */
export function notificationRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();
  r.get("/notifications", async (req, res) => {
    const q = parseQuery(z.object({ unread: z.enum(["0", "1"]).optional(), limit: z.coerce.number().int().min(1).max(200).optional() }), req);
    const actor = await requireActor(req, auth);
    res.json(listNotifications(ctx, actor.id, { unreadOnly: q.unread === "1", limit: q.limit }));
  });
  r.post("/notifications/read-all", async (req, res) => {
    const actor = await requireActor(req, auth);
    res.json({ marked: markAllNotificationsRead(ctx, actor.id) });
  });
  r.post("/notifications/:id/read", async (req, res) => {
    const actor = await requireActor(req, auth);
    markNotificationRead(ctx, actor.id, String(req.params.id));
    res.status(204).end();
  });
  return r;
}
