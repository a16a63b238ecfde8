import express from "express";
import helmet from "helmet";
import { pinoHttp } from "pino-http";
import fs from "node:fs";
import path from "node:path";
import type { AppContext } from "./context";
import { createAuth, type Auth } from "./auth/auth";
import { toNodeHandler } from "better-auth/node";
import { crossSiteGuard } from "./http/cross-site";
import { requireBodyType } from "./http/body-type";
import { errorHandler, notFoundHandler } from "./http/error-handler";
import { registerRoutes } from "./routes/index";
import { clientIpHeader } from "./auth/client-ip";
import { afterResponseScope } from "./http/after-response";
import { requestLogLevel } from "./logging";

export interface CreatedApp extends express.Express {
  locals: express.Express["locals"] & { ctx: AppContext; auth: Auth };
}

/** Builds the Express app. It does not listen: server/index.ts does, and tests use supertest. */
export function createApp(ctx: AppContext, opts: { clientDir?: string } = {}): CreatedApp {
  const app = express() as CreatedApp;
  const auth = createAuth(ctx);
  app.locals.ctx = ctx;
  app.locals.auth = auth;
  app.disable("x-powered-by");
  app.set("trust proxy", trustProxySetting(ctx.env.TRUST_PROXY));

  app.use(afterResponseScope);
  app.use(
    pinoHttp({
      logger: ctx.logger,
      customLogLevel: requestLogLevel(ctx.env),
      autoLogging: { ignore: (req) => req.url === "/api/health" || req.url === "/api/health/live" },
      serializers: {
        req: (req) => ({ id: req.id, method: req.method, url: redactUrl(req.url) }),
        res: (res) => ({ statusCode: res.statusCode }),
      },
    }),
  );
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          "default-src": ["'self'"],
          "img-src": ["'self'", "data:", "blob:"],
          "style-src": ["'self'", "'unsafe-inline'"],
          "connect-src": ["'self'", "ws:", "wss:"],
          "form-action": [
            "'self'",
            ...(ctx.env.STRIPE_API_BASE ? [ctx.env.STRIPE_API_BASE] : []),
            "http://localhost:*",
            "http://127.0.0.1:*",
          ],
          "upgrade-insecure-requests": null,
        },
      },
      crossOriginEmbedderPolicy: false,
    }),
  );

  const isWebhook = (p: string) => p.startsWith("/api/webhooks/");
  app.use(
    "/api",
    crossSiteGuard(allowedOrigins(ctx), (p) => isWebhook("/api" + p)),
  );
  // JSON routes take JSON only (415 otherwise); uploads take multipart; webhooks take their raw body.
  const bodyType = requireBodyType();
  app.use("/api", (req, res, next) => (isWebhook("/api" + req.path) ? next() : bodyType(req, res, next)));

  // better-auth reads its own body, so it is mounted before the JSON parser.
  app.use("/api/auth", clientIpHeader);
  app.all("/api/auth/{*splat}", toNodeHandler(auth));
  // Webhooks need the raw body for signature verification.
  app.use("/api/webhooks", express.raw({ type: "*/*", limit: "1mb" }));
  app.use(express.json({ limit: "1mb" }));

  registerRoutes(app, ctx, auth);

  app.use("/api", notFoundHandler);
  const clientDir = opts.clientDir;
  if (clientDir && fs.existsSync(path.join(clientDir, "index.html"))) {
    app.use(express.static(clientDir, { index: false, maxAge: "1h" }));
    app.get("/{*splat}", (req, res, next) => {
      if (req.path.startsWith("/api/") || req.path.startsWith("/socket.io")) return next();
      res.sendFile(path.join(clientDir, "index.html"));
    });
  }
  app.use(notFoundHandler);
  app.use(errorHandler);
  return app;
}

export function allowedOrigins(ctx: AppContext): string[] {
  const list = new Set<string>([new URL(ctx.env.publicUrl).origin]);
  if (ctx.env.NODE_ENV !== "production") {
    list.add(`http://localhost:${ctx.env.PORT}`);
    list.add(`http://127.0.0.1:${ctx.env.PORT}`);
    list.add("http://localhost:5173");
  }
  return [...list];
}

/** Query values that grant access (verification, reset and invitation tokens) never reach the logs. */
export function redactUrl(url: string): string {
  return url.replace(/([?&](?:token|code|secret|key|password|callbackURL)=)[^&#]*/gi, "$1[redacted]");
}

function trustProxySetting(v: string): string | number | boolean {
  if (v === "true" || v === "false") return v === "true";
  if (/^\d+$/.test(v)) return Number(v);
  return v;
}
