import { Router } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { requireActor } from "../auth/session";
import { parseParams } from "../http/validate";
import { idParamSchema } from "../../shared/schemas/traces";
import { entryThumbnail } from "../services/thumbnails";

/**
 * Waveform thumbnails of casebook entries (server/services/thumbnails.ts): validate → authenticate
 * → the service authorizes like the entry and renders (once per trace content) → SVG with an ETag;
 * a matching If-None-Match answers 304.
 */
export function thumbnailRoutes(ctx: AppContext, auth: Auth): Router {
  const r = Router();
  r.get("/casebook/:id/thumbnail.svg", async (req, res) => {
    const { id } = parseParams(idParamSchema, req);
    const actor = await requireActor(req, auth);
    const t = await entryThumbnail(ctx, actor, id);
    res.set({
      "Content-Type": "image/svg+xml; charset=utf-8",
      "Cache-Control": "private, max-age=86400",
      ETag: t.etag,
      "X-Content-Type-Options": "nosniff",
      "Content-Security-Policy": "default-src 'none'; style-src 'unsafe-inline'",
    });
    if (req.headers["if-none-match"]?.split(/\s*,\s*/).includes(t.etag)) return void res.status(304).end();
    res.send(t.svg);
  });
  return r;
}
