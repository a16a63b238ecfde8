import type { Express } from "express";
import type { AppContext } from "../context";
import type { Auth } from "../auth/auth";
import { healthRoutes } from "./health";
import { accountRoutes } from "./accounts";
import { shopRoutes } from "./shops";
import { expertRoutes } from "./experts";
import { adminExpertRoutes } from "./admin-experts";
import { devMailRoutes } from "./dev-mail";
import { caseRoutes } from "./cases";
import { photoRoutes } from "./photos";
import { traceRoutes } from "./traces";
import { annotationRoutes } from "./annotations";
import { messageRoutes } from "./messages";
import { webhookRoutes } from "./webhooks";
import { submitRoutes } from "./submit";
import { queueRoutes } from "./queue";
import { answerRoutes } from "./answers";
import { adminPricingRoutes } from "./admin-pricing";
import { billingRoutes } from "./billing";
import { earningsRoutes } from "./earnings";
import { notificationRoutes } from "./notifications";
import { casebookRoutes } from "./casebook";
import { deskRoutes } from "./desk";

/** Every resource's router, mounted under /api. Add one line per resource. */
export function registerRoutes(app: Express, ctx: AppContext, auth: Auth): void {
  app.use("/api", healthRoutes(ctx, auth));
  app.use("/api", webhookRoutes(ctx));
  app.use("/api", submitRoutes(ctx, auth));
  app.use("/api", queueRoutes(ctx, auth));
  app.use("/api", answerRoutes(ctx, auth));
  app.use("/api", adminPricingRoutes(ctx, auth));
  app.use("/api", billingRoutes(ctx, auth));
  app.use("/api", earningsRoutes(ctx, auth));
  app.use("/api", notificationRoutes(ctx, auth));
  app.use("/api", deskRoutes(ctx, auth));
  app.use("/api", accountRoutes(ctx, auth));
  app.use("/api", shopRoutes(ctx, auth));
  app.use("/api", expertRoutes(ctx, auth));
  app.use("/api", adminExpertRoutes(ctx, auth));
  app.use("/api", casebookRoutes(ctx, auth));
  app.use("/api", caseRoutes(ctx, auth));
  app.use("/api", photoRoutes(ctx, auth));
  app.use("/api", traceRoutes(ctx, auth));
  app.use("/api", annotationRoutes(ctx, auth));
  app.use("/api", messageRoutes(ctx, auth));
  app.use(devMailRoutes(ctx));
}
