import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseParams, parseQuery } from "../http/validate";
import { notificationsQuerySchema } from "../../shared/schemas/queue";
import { idParamSchema } from "../../shared/schemas/traces";
import { listNotifications, markAllNotificationsRead, markNotificationRead } from "../services/notifications";

/** The signed-in user's in-app notifications. */
export function notificationRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();
  r.get("/notifications", async (req, res) => {
    const q = parseQuery(notificationsQuerySchema, req);
    const actor = await requireActor(req, auth);
    res.json(await listNotifications(ctx, actor.id, { unreadOnly: q.unread === "1", limit: q.limit }));
  });
  r.post("/notifications/read-all", async (req, res) => {
    const actor = await requireActor(req, auth);
    res.json({ marked: await markAllNotificationsRead(ctx, actor.id) });
  });
  r.post("/notifications/:id/read", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    await markNotificationRead(ctx, actor.id, id);
    res.status(204).end();
  });
  return r;
}
