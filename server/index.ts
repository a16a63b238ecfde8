import http from "node:http";
import path from "node:path";
import { pino, type Logger } from "pino";
import Stripe from "stripe";
import { loadEnv, type Env } from "./env";
import { openDatabase } from "./db/client";
import { createApp } from "./app";
import { noRealtime, type AppContext, type Mailer } from "./context";
import { createMailer } from "./integrations/mailer";
import { createStripeClient } from "./integrations/payments";
import { startMailCatcher } from "./fakes/smtp";
import { startFakeStripe } from "./fakes/stripe/index";
import { attachRealtime } from "./realtime/index";
import { startBackground } from "./services/background";
import { stopUploadPool } from "./uploads/pool";
import { reconcileDataFolder, startReconcileTimer } from "./uploads/reconcile";
import { stopCasebookSearch } from "./services/casebook-search";

/** Servers running in this process; the upload pool is shared by them and stops with the last. */
let running = 0;

export interface RunningServer {
  url: string;
  port: number;
  ctx: AppContext;
  mailCatcher: Awaited<ReturnType<typeof startMailCatcher>> | null;
  fakeStripe: Awaited<ReturnType<typeof startFakeStripe>> | null;
  close(): Promise<void>;
}

/**
 * env → database (migrated) → local fakes (when no real service is configured) → app → HTTP
 * server → realtime → background sweeps → listen. Used by `npm start`, the dev server and the tests.
 */
export async function startServer(overrides: Partial<Record<keyof Env, string>> = {}, logger?: Logger): Promise<RunningServer> {
  const env = loadEnv({ ...process.env, ...overrides } as NodeJS.ProcessEnv);
  const log = logger ?? pino({ level: env.LOG_LEVEL });
  const db = openDatabase(env.DATABASE_URL);

  let mailCatcher: RunningServer["mailCatcher"] = null;
  let smtp = { host: env.SMTP_HOST, port: env.SMTP_PORT };
  if (!env.SMTP_HOST) {
    mailCatcher = await startMailCatcher({ port: env.MAIL_CATCHER_PORT, host: "127.0.0.1", storeDir: path.join(env.dataDir, "mail") });
    smtp = { host: "127.0.0.1", port: mailCatcher.port };
  }
  const mailer: Mailer = createMailer({
    host: smtp.host!,
    port: smtp.port!,
    secure: env.SMTP_SECURE,
    user: env.SMTP_USER,
    pass: env.SMTP_PASS,
    from: env.MAIL_FROM,
  });

  const server = http.createServer();
  await new Promise<void>((resolve) => server.listen(env.PORT, env.HOST, resolve));
  const port = (server.address() as { port: number }).port;
  const resolvedEnv: Env = env.PORT === port && env.PUBLIC_URL ? env : { ...env, PORT: port, publicUrl: env.PUBLIC_URL ?? `http://localhost:${port}` };

  let fakeStripe: RunningServer["fakeStripe"] = null;
  let apiBase = env.STRIPE_API_BASE;
  const realStripe = env.STRIPE_SECRET_KEY.startsWith("sk_live_") || (env.STRIPE_SECRET_KEY.startsWith("sk_test_") && !env.STRIPE_SECRET_KEY.startsWith("sk_test_burnline"));
  if (!apiBase && !realStripe) {
    fakeStripe = await startFakeStripe({
      port: env.FAKE_STRIPE_PORT,
      host: "127.0.0.1",
      webhookSecret: env.STRIPE_WEBHOOK_SECRET,
      webhookUrl: `http://127.0.0.1:${port}/api/webhooks/stripe`,
      stateFile: env.NODE_ENV === "test" ? undefined : path.join(env.dataDir, "fake-stripe.json"),
    });
    apiBase = fakeStripe.url;
  }
  const stripe: Stripe = createStripeClient({ secretKey: env.STRIPE_SECRET_KEY, apiBase });

  const ctx: AppContext = { env: { ...resolvedEnv, STRIPE_API_BASE: apiBase }, db, logger: log, mailer, stripe, realtime: noRealtime, now: () => new Date() };
  // leftovers of a crash go before the first request can start an upload
  await reconcileDataFolder(ctx, { startup: true });
  const reconcileTimer = startReconcileTimer(ctx);
  const app = createApp(ctx, { clientDir: path.resolve("dist/client") });
  server.on("request", app);
  const realtime = attachRealtime(server, ctx, app.locals.auth);
  ctx.realtime = realtime;
  const background = startBackground(ctx);

  const url = resolvedEnv.publicUrl;
  running++;
  return {
    url,
    port,
    ctx,
    mailCatcher,
    fakeStripe,
    async close() {
      background.stop();
      reconcileTimer.stop();
      await realtime.close();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      server.closeAllConnections?.();
      await fakeStripe?.close();
      await mailCatcher?.close();
      await stopCasebookSearch(ctx);
      if (--running === 0) await stopUploadPool();
      db.$client.close();
    },
  };
}
