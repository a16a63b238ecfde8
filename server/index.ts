import http from "node:http";
import path from "node:path";
import type { Logger } from "pino";
import type Stripe from "stripe";
import { loadEnv, type Env } from "./env";
import { openDatabase, type Db } from "./db/client";
import { createApp } from "./app";
import { noRealtime, type AppContext, type DemoPlugin } from "./context";
import { createMailer } from "./integrations/mailer";
import { createStripeClient } from "./integrations/payments";
import { startMailCatcher } from "./fakes/smtp";
import { startFakeStripe } from "./fakes/stripe/index";
import { attachRealtime } from "./realtime/index";
import { connectRedis, type SharedRedis } from "./cluster/redis";
import { startBackground, type Sweep } from "./services/background";
import { workflowSweeps } from "./workflow/sweeps";
import { stopUploadPool } from "./uploads/pool";
import { RECONCILE_EVERY_MS, reconcileDataFolder, startReconcileTimer } from "./uploads/reconcile";
import { stopCasebookSearch, warmCasebookSearch } from "./services/casebook-search";
import { createLogger } from "./logging";
import { createReadiness, healthAnswer, type Readiness } from "./readiness";
import { outboxMailer, startMailDispatcher } from "./mail/index";
import { warmPasswordEstimator } from "./auth/password-strength";

const LOOPBACK_NAMES = new Set(["localhost", "127.0.0.1", "[::1]"]);

/** Servers running in this process; the upload pool is shared by them and stops with the last. */
let running = 0;

export interface RunningServer {
  url: string;
  port: number;
  ctx: AppContext;
  mailCatcher: Awaited<ReturnType<typeof startMailCatcher>> | null;
  fakeStripe: Awaited<ReturnType<typeof startFakeStripe>> | null;
  /** Resolves when GET /api/health answers ready (demo seeded, workers started…); rejects if a part failed. */
  ready: Promise<void>;
  close(): Promise<void>;
}

export interface StartOptions {
  /** DEMO on: the demo accounts to show and the seed to run before the server is ready (from the entry point). */
  demo?: DemoPlugin | null;
}

/**
 * env → database (migrated) → local fakes (when no real service is configured) → app → HTTP
 * server → realtime → background sweeps → listen. Used by `npm start`, the dev server and the tests.
 *
 * The server listens early (the public URL may depend on the port it got) and answers
 * `GET /api/health` with 503 and the list of what is still starting until every part registered
 * in ctx.readiness is in place; `ready` resolves then. Other requests that arrive before the app
 * is mounted answer 503 as well.
 */
export async function startServer(
  overrides: Partial<Record<keyof Env, string>> = {},
  logger?: Logger,
  opts: StartOptions = {},
): Promise<RunningServer> {
  const env = loadEnv({ ...process.env, ...overrides } as NodeJS.ProcessEnv);
  const log = logger ?? (await createLogger(env));
  const readiness = createReadiness();
  const parts = {
    database: readiness.pending("database"),
    mail: readiness.pending("mail"),
    payments: readiness.pending("payments"),
    app: readiness.pending("app"),
  };
  const demo = env.DEMO && opts.demo ? opts.demo : null;
  const seeded = demo ? readiness.pending("demo data") : null;

  const server = http.createServer();
  let handler: http.RequestListener = startingHandler(readiness);
  server.on("request", (req, res) => handler(req, res));
  await new Promise<void>((resolve) => server.listen(env.PORT, env.HOST, resolve));
  const port = (server.address() as { port: number }).port;
  const resolvedEnv: Env =
    env.PORT === port && env.PUBLIC_URL
      ? env
      : { ...env, PORT: port, publicUrl: env.PUBLIC_URL ?? `http://localhost:${port}` };

  let db: Db;
  try {
    db = await openDatabase(env.DATABASE_URL, {
      authToken: env.DATABASE_AUTH_TOKEN,
      concurrency: env.DATABASE_CONCURRENCY,
    });
  } catch (err) {
    server.close();
    throw err;
  }
  parts.database();

  let redis: SharedRedis | null = null;
  if (env.REDIS_URL) {
    try {
      redis = await connectRedis(env.REDIS_URL, log);
    } catch (err) {
      server.close();
      await db.close();
      throw err;
    }
  }

  const { mailCatcher, transport } = await startMail(env);
  const pollMs = env.NODE_ENV === "test" ? 500 : undefined;
  const dispatcher = startMailDispatcher({ db, transport, logger: log, ...(pollMs ? { pollMs } : {}) });
  parts.mail();

  const { fakeStripe, apiBase, stripe } = await startPayments(env, resolvedEnv, port);
  parts.payments();

  const ctx: AppContext = {
    env: { ...resolvedEnv, STRIPE_API_BASE: apiBase },
    db,
    logger: log,
    mailer: outboxMailer(db, dispatcher),
    stripe,
    realtime: noRealtime,
    now: () => new Date(),
    readiness,
    demo: demo ? { password: demo.password, signIns: demo.signIns } : null,
  };
  // leftovers of a crash go before the first request can start an upload (on several nodes, only
  // what is past the grace period: the others may be writing; and the periodic pass is a shared job)
  await reconcileDataFolder(ctx, { startup: true, shared: !!redis });
  const reconcileTimer = redis ? { stop() {} } : startReconcileTimer(ctx);
  const app = createApp(ctx, { clientDir: path.resolve("dist/client") });
  handler = app;
  const realtime = await attachRealtime(server, ctx, app.locals.auth, { redis });
  ctx.realtime = realtime;
  const reconcile: Sweep = {
    name: "data-folder",
    everyMs: RECONCILE_EVERY_MS,
    run: (c) => reconcileDataFolder(c, { shared: true }),
  };
  const background = await startBackground(ctx, redis ? [...sweepsFor(env), reconcile] : sweepsFor(env), redis);
  // Built ahead of the first request outside tests (tests build them on first use, which is as
  // correct and spares every test server the start-up work).
  if (env.NODE_ENV !== "test") {
    void readiness.track("password check", warmPasswordEstimator());
    void readiness.track("casebook search", warmCasebookSearch(ctx));
  }
  if (demo && seeded) {
    demo.seedIfEmpty(ctx).then(
      (didSeed) => {
        log.info(didSeed ? "demo data seeded" : "demo data already present");
        seeded();
      },
      (err) => {
        log.error({ err }, "the demo seed failed");
        seeded(err);
      },
    );
  }
  parts.app();
  const ready = readiness.whenReady();
  ready.catch(() => {}); // reported through health and the caller's own await

  const url = resolvedEnv.publicUrl;
  running++;
  return {
    url,
    port,
    ctx,
    mailCatcher,
    fakeStripe,
    ready,
    async close() {
      readiness.stopping();
      await background.stop();
      await dispatcher.stop();
      reconcileTimer.stop();
      await realtime.close();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      server.closeAllConnections?.();
      await fakeStripe?.close();
      transport.close();
      await mailCatcher?.close();
      await stopCasebookSearch(ctx);
      if (--running === 0) await stopUploadPool();
      await redis?.close();
      await db.close();
    },
  };
}

/** The mail transport: the configured SMTP server, or the local mail catcher when none is set. */
async function startMail(env: Env) {
  let mailCatcher: RunningServer["mailCatcher"] = null;
  let smtp = { host: env.SMTP_HOST, port: env.SMTP_PORT };
  if (!env.SMTP_HOST) {
    mailCatcher = await startMailCatcher({
      port: env.MAIL_CATCHER_PORT,
      host: "127.0.0.1",
      storeDir: path.join(env.dataDir, "mail"),
    });
    smtp = { host: "127.0.0.1", port: mailCatcher.port };
  }
  const transport = createMailer({
    host: smtp.host!,
    port: smtp.port!,
    secure: env.SMTP_SECURE,
    user: env.SMTP_USER,
    pass: env.SMTP_PASS,
    from: env.MAIL_FROM,
    pool: true,
  });
  return { mailCatcher, transport };
}

/** The payment service's SDK client: the real service when configured, or the local fake started here. */
async function startPayments(env: Env, resolvedEnv: Env, port: number) {
  let fakeStripe: RunningServer["fakeStripe"] = null;
  let apiBase = env.STRIPE_API_BASE;
  const realStripe =
    env.STRIPE_SECRET_KEY.startsWith("sk_live_") ||
    (env.STRIPE_SECRET_KEY.startsWith("sk_test_") && !env.STRIPE_SECRET_KEY.startsWith("sk_test_burnline"));
  if (!apiBase && !realStripe) {
    // The hosted checkout opens on the app's own host name (localhost vs 127.0.0.1), so the browser
    // comes back to the app with the same cookies; on a LAN name it listens where the app does.
    const publicHost = new URL(resolvedEnv.publicUrl).hostname;
    fakeStripe = await startFakeStripe({
      port: env.FAKE_STRIPE_PORT,
      host: LOOPBACK_NAMES.has(publicHost) ? "127.0.0.1" : env.HOST,
      publicHost,
      webhookSecret: env.STRIPE_WEBHOOK_SECRET,
      webhookUrl: `http://127.0.0.1:${port}/api/webhooks/stripe`,
      stateFile: env.NODE_ENV === "test" ? undefined : path.join(env.dataDir, "fake-stripe.json"),
    });
    apiBase = fakeStripe.url;
  }
  const stripe: Stripe = createStripeClient({ secretKey: env.STRIPE_SECRET_KEY, apiBase });
  return { fakeStripe, apiBase, stripe };
}

/** The workflow's sweeps, the queue sweep's period set by QUEUE_SWEEP_MS when given. */
function sweepsFor(env: Env): Sweep[] {
  return workflowSweeps.map((s) =>
    s.name === "queue" && env.QUEUE_SWEEP_MS ? { ...s, everyMs: env.QUEUE_SWEEP_MS } : s,
  );
}

/** Answers while the app is being built: health (503 with what is pending), liveness (200), anything else 503. */
function startingHandler(readiness: Readiness): http.RequestListener {
  return (req, res) => {
    const p = (req.url ?? "/").split("?")[0];
    const send = (status: number, body: unknown) => {
      res.writeHead(status, {
        "content-type": "application/json; charset=utf-8",
        "cache-control": "no-store",
        ...(status === 503 ? { "retry-after": "1" } : {}),
      });
      res.end(JSON.stringify(body));
    };
    if (p === "/api/health/live") return send(200, { ok: true, live: true });
    const { body } = healthAnswer(readiness.state());
    if (p === "/api/health") return send(503, body);
    send(503, { error: { code: "not_ready", message: "Burnline is starting. Try again in a moment." } });
  };
}
