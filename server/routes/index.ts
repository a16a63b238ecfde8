import type { Express } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { healthRoutes } from "./health";

/** Every resource's router, mounted under /api. Add one line per resource. */
export function registerRoutes(app: Express, ctx: AppContext, auth: Auth): void {
  app.use("/api", healthRoutes(ctx, auth));
}
