import { z } from "zod";
import path from "node:path";

const bool = z
  .enum(["1", "0", "true", "false", "yes", "no"])
  .transform((v) => v === "1" || v === "true" || v === "yes");

/**
 * Configuration from the environment, validated at start. Every value has a default that works
 * on a fresh machine: a SQLite file under data/, the local SMTP catcher and the local Stripe fake.
 */
export const envSchema = z.object({
  NODE_ENV: z.enum(["development", "production", "test"]).default("development"),
  PORT: z.coerce.number().int().min(0).max(65535).default(3000),
  HOST: z.string().default("0.0.0.0"),
  PUBLIC_URL: z.string().url().optional(),
  /** a SQLite file (embedded, one node) or a libSQL server: libsql://…, http(s)://… (several nodes) */
  DATABASE_URL: z.string().default("data/burnline.db"),
  /** sent to the libSQL server when set (the hosted service needs one) */
  DATABASE_AUTH_TOKEN: z.string().optional(),
  /** at most this many units of work of one node open on the libSQL server at once */
  DATABASE_CONCURRENCY: z.coerce.number().int().min(1).max(1000).default(32),
  /** redis://… turns on the socket.io Redis streams adapter, shared presence and BullMQ queues (several nodes) */
  REDIS_URL: z.string().url().optional(),
  /** how often the queue's timed moves run, ms (default 30 s) */
  QUEUE_SWEEP_MS: z.coerce.number().int().min(200).optional(),
  DATA_DIR: z.string().default("data"),
  AUTH_SECRET: z.string().min(32).default("burnline-local-development-secret-change-me-0001"),
  /** seed and show the demo scenario; defaults to on outside production, refused in production */
  DEMO: bool.optional(),
  /** Express "trust proxy": which proxies may tell us the client address (rate limits depend on it) */
  TRUST_PROXY: z.string().default("loopback"),
  LOG_LEVEL: z.enum(["fatal", "error", "warn", "info", "debug", "trace", "silent"]).default("info"),
  /** readable lines (development default) or one JSON object per line (default elsewhere) */
  LOG_FORMAT: z.enum(["pretty", "json"]).optional(),
  SMTP_HOST: z.string().optional(),
  SMTP_PORT: z.coerce.number().int().optional(),
  SMTP_USER: z.string().optional(),
  SMTP_PASS: z.string().optional(),
  SMTP_SECURE: bool.default(false),
  MAIL_FROM: z.string().default("Burnline <desk@burnline.test>"),
  MAIL_CATCHER_PORT: z.coerce.number().int().min(0).default(3025),
  STRIPE_SECRET_KEY: z.string().default("sk_test_burnline_local"),
  STRIPE_WEBHOOK_SECRET: z.string().default("whsec_burnline_local"),
  STRIPE_API_BASE: z.string().url().optional(),
  FAKE_STRIPE_PORT: z.coerce.number().int().min(0).default(3012),
  MAX_TRACE_BYTES: z.coerce
    .number()
    .int()
    .positive()
    .default(200 * 1024 * 1024),
  MAX_PHOTO_BYTES: z.coerce
    .number()
    .int()
    .positive()
    .default(15 * 1024 * 1024),
  /** upload pool threads (server/uploads/pool.ts); 0 = one per core but one, at least one */
  UPLOAD_WORKERS: z.coerce.number().int().min(0).max(64).default(0),
  /** captures that may wait for a pool thread before new ones are refused with 503 busy */
  UPLOAD_QUEUE: z.coerce.number().int().min(0).default(32),
  /** an unfinished resumable upload is removed this long after it was created */
  UPLOAD_EXPIRY_HOURS: z.coerce.number().positive().default(24),
  /** a stored file no row references is removed once it is this old (the periodic reconcile) */
  ORPHAN_GRACE_MINUTES: z.coerce.number().min(0).default(60),
  /** the seller printed on receipts (an invented demo seller by default) */
  SELLER_NAME: z.string().trim().min(1).default("Burnline Desk Services (demo seller)"),
  SELLER_ADDRESS: z.string().trim().min(1).default("12 Sample Row, Exampleton, EX 00000"),
  SELLER_TAX_ID: z.string().trim().min(1).default("DEMO-TAX-0000000"),
  /** the tax included in every price: its name and its rate in percent (0: no tax line) */
  TAX_LABEL: z.string().trim().min(1).max(40).default("Sales tax"),
  TAX_RATE_PERCENT: z.coerce.number().min(0).max(100).default(7.5),
});

export type Env = Omit<z.infer<typeof envSchema>, "DEMO"> & {
  DEMO: boolean;
  publicUrl: string;
  dataDir: string;
  secureCookies: boolean;
};

export function loadEnv(source: NodeJS.ProcessEnv = process.env): Env {
  const parsed = envSchema.safeParse(source);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join(".")}: ${i.message}`).join("\n");
    throw new Error(`Invalid configuration:\n${lines}`);
  }
  const e = parsed.data;
  if (e.NODE_ENV === "production") {
    const problems: string[] = [];
    if (e.AUTH_SECRET.startsWith("burnline-local-"))
      problems.push("AUTH_SECRET: set a secret of your own in production");
    if (e.STRIPE_WEBHOOK_SECRET === "whsec_burnline_local")
      problems.push("STRIPE_WEBHOOK_SECRET: set the webhook signing secret of your Stripe account");
    if (e.STRIPE_SECRET_KEY.startsWith("sk_test_burnline"))
      problems.push("STRIPE_SECRET_KEY: set the secret key of your Stripe account");
    if (e.DEMO) problems.push("DEMO: the demo accounts have a published password; they cannot be on in production");
    if (problems.length) throw new Error(`Invalid configuration:\n${problems.map((p) => `  ${p}`).join("\n")}`);
  }
  const publicUrl = e.PUBLIC_URL ?? `http://localhost:${e.PORT}`;
  return {
    ...e,
    DEMO: e.DEMO ?? e.NODE_ENV !== "production",
    publicUrl,
    dataDir: path.resolve(e.DATA_DIR),
    secureCookies: e.NODE_ENV === "production" && publicUrl.startsWith("https://"),
  };
}
