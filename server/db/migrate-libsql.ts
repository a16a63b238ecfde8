/**
 * Migrations on a libSQL server when several nodes may start together. drizzle's libSQL migrator
 * reads the last applied migration, then applies the newer ones in one transaction (a batch). Two
 * nodes that read at the same time both try: one commits, the other's batch fails ("table …
 * already exists", or the write lock) and is rolled back whole. So a failed attempt is retried
 * after a short random pause, and an attempt that finds nothing newer is done. `npm run cluster`
 * migrates once before any node starts (scripts/cluster/prepare.ts); this is the safety net for
 * nodes started by other means.
 */
import type { Client } from "@libsql/client/http";
import type { LibSQLDatabase } from "drizzle-orm/libsql/driver-core";
import { migrate } from "drizzle-orm/libsql/migrator";
import { readMigrationFiles } from "drizzle-orm/migrator";
import type * as schema from "./schema/index";

const ATTEMPTS = 8;

/** Errors a concurrent migrator causes: its tables are already there, or it holds the lock. */
function raced(err: unknown): boolean {
  const text = `${(err as Error)?.message ?? ""} ${(err as { code?: string })?.code ?? ""}`;
  return /already exists|SQLITE_BUSY|database is locked|TRANSACTION_TIMEOUT|UNIQUE constraint/i.test(text);
}

/** The newest migration the server has recorded (its folder timestamp), or null before the first. */
async function lastApplied(client: Client): Promise<number | null> {
  try {
    const r = await client.execute("SELECT created_at FROM __drizzle_migrations ORDER BY created_at DESC LIMIT 1");
    return r.rows.length ? Number(r.rows[0].created_at) : null;
  } catch {
    return null; // no table yet
  }
}

export async function migrateLibsql(
  client: Client,
  orm: LibSQLDatabase<typeof schema>,
  migrationsFolder: string,
  opts: { attempts?: number; sleep?: (ms: number) => Promise<void> } = {},
): Promise<void> {
  const newest = Math.max(0, ...readMigrationFiles({ migrationsFolder }).map((m) => m.folderMillis));
  const sleep = opts.sleep ?? ((ms: number) => new Promise<void>((r) => setTimeout(r, ms)));
  const attempts = opts.attempts ?? ATTEMPTS;
  for (let attempt = 1; ; attempt++) {
    const last = await lastApplied(client);
    if (last !== null && last >= newest) return;
    try {
      await migrate(orm, { migrationsFolder });
      return;
    } catch (err) {
      if (!raced(err) || attempt >= attempts) throw err;
      await sleep(100 + Math.floor(Math.random() * 200 * attempt));
    }
  }
}
