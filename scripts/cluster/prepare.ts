/**
 * Run once by `npm run cluster` before any app node starts, with the nodes' environment, so that
 * nothing is done twice by nodes starting together:
 *  1. the libSQL server gets the schema: drizzle's libsql migrator applies the committed migrations
 *     (several nodes migrating at once race: each reads the last applied migration, then all but one
 *     fail with "table … already exists");
 *  2. the nodes' database is migrated and the demo is seeded when it is empty (DEMO on), through the
 *     same start as `npm start` on a free port, which then stops again.
 * Prints one line `PREPARED {json}` for the launcher.
 */
import path from "node:path";
import { createClient } from "@libsql/client";
import { drizzle } from "drizzle-orm/libsql";
import { migrate } from "drizzle-orm/libsql/migrator";
import { sql } from "drizzle-orm";
import { startServer } from "../../server/index";
import { seedDemoIfEmpty, DEMO_PASSWORD, DEMO_SIGN_INS } from "../../demo/seed";
import { ROOT } from "./lib";

const migrationsFolder = path.join(ROOT, "server/db/migrations");

/** Applies the migrations to the libSQL server; returns how many are recorded there. */
async function migrateLibsql(url: string, authToken: string | undefined): Promise<number> {
  const client = createClient({ url, authToken });
  try {
    const db = drizzle(client);
    await migrate(db, { migrationsFolder });
    const row = await db.get<{ n: number }>(sql`select count(*) as n from __drizzle_migrations`);
    return Number(row?.n ?? 0);
  } finally {
    client.close();
  }
}

async function main(): Promise<void> {
  const libsqlUrl = process.env.CLUSTER_LIBSQL_URL;
  const libsqlMigrations = libsqlUrl ? await migrateLibsql(libsqlUrl, process.env.DATABASE_AUTH_TOKEN || undefined) : null;

  const server = await startServer({ PORT: "0", HOST: "127.0.0.1", LOG_LEVEL: process.env.PREPARE_LOG_LEVEL ?? "warn" });
  let seeded = false;
  try {
    if (server.ctx.env.DEMO) seeded = await seedDemoIfEmpty(server.ctx);
  } finally {
    await server.ctx.mailer.drain().catch(() => {});
    await server.close();
  }
  const demo = server.ctx.env.DEMO ? { password: DEMO_PASSWORD, signIns: DEMO_SIGN_INS } : null;
  process.stdout.write(`PREPARED ${JSON.stringify({ libsqlMigrations, seeded, demo })}\n`);
}

main().then(
  () => process.exit(0),
  (err) => {
    console.error(err instanceof Error ? (err.stack ?? err.message) : err);
    process.exit(1);
  },
);
