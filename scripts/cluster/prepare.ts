/**
 * Run once by `npm run cluster` before any app node starts, with the nodes' environment, so that
 * nothing is done twice by nodes starting together (the nodes would also cope: the migrator retries
 * a migration another node applied meanwhile, server/db/migrate-libsql.ts): the libSQL server gets
 * the schema (the committed migrations, through the same start as `npm start` on a free port) and
 * the demo is seeded when the database is empty (DEMO on); then that server stops again.
 * Prints one line `PREPARED {json}` for the launcher.
 */
import { sql } from "drizzle-orm";
import { startServer } from "../../server/index";
import { seedDemoIfEmpty, DEMO_PASSWORD, DEMO_SIGN_INS } from "../../demo/seed";

async function main(): Promise<void> {
  const server = await startServer({
    PORT: "0",
    HOST: "127.0.0.1",
    LOG_LEVEL: process.env.PREPARE_LOG_LEVEL ?? "warn",
  });
  let seeded = false;
  let libsqlMigrations: number | null = null;
  try {
    if (server.ctx.db.driver === "libsql") {
      const row = await server.ctx.db.read((tx) =>
        tx.get<{ n: number }>(sql`select count(*) as n from __drizzle_migrations`),
      );
      libsqlMigrations = Number(row?.n ?? 0);
    }
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
