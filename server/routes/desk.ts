import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseBody, parseParams } from "../http/validate";
import { noticeSettingsSchema } from "../../shared/schemas/queue";
import { idParamSchema } from "../../shared/schemas/traces";
import { getNoticeSettings, setNoticeSettings } from "../services/notice-settings";
import { markCaseSeen } from "../services/reading";
import { caseFilters } from "../services/cases";
import { deleteDraft } from "../workflow/commands/delete-draft";

/** The desk as its people use it: notice settings, read marks, deleting a draft, the admin's filters. */
export function deskRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();

  r.get("/me/notice-settings", async (req, res) => {
    const actor = await requireActor(req, auth);
    res.json(await getNoticeSettings(ctx, actor.id));
  });

  r.put("/me/notice-settings", async (req, res) => {
    const body = parseBody(noticeSettingsSchema, req);
    const actor = await requireActor(req, auth);
    res.json(await setNoticeSettings(ctx, actor.id, body));
  });

  /** The reader has the case's live record in front of them: its messages and marks are read. */
  r.post("/cases/:id/seen", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    res.json(await markCaseSeen(ctx, actor, id));
  });

  r.delete("/cases/:id", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    res.json(await deleteDraft(ctx, actor, id));
  });

  r.get("/admin/case-filters", async (req, res) => {
    await requireActor(req, auth, ["admin"]);
    res.json(await caseFilters(ctx));
  });

  return r;
}
