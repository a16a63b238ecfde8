import Database from "better-sqlite3";
import { drizzle, type BetterSQLite3Database } from "drizzle-orm/better-sqlite3";
import { migrate } from "drizzle-orm/better-sqlite3/migrator";
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import * as schema from "./schema/index";
import { embeddedUnitOfWork, type Tx, type UnitOfWork } from "./unit-of-work";

/**
 * The embedded database: drizzle over better-sqlite3 (synchronous queries, used directly by the
 * live layer and the uploads), plus the unit-of-work seam `write` / `read` that the workflow and
 * the payments use so their code also runs on an asynchronous driver.
 */
export type Db = BetterSQLite3Database<typeof schema> & { $client: Database.Database } & UnitOfWork;
/** A synchronous transaction of the embedded database (`db.transaction((tx) => …)`). */
export type SyncTx = Parameters<Parameters<Db["transaction"]>[0]>[0];
export type { Tx, UnitOfWork };

const migrationsFolder = path.join(path.dirname(fileURLToPath(import.meta.url)), "migrations");

/**
 * Opens the SQLite file with the pragmas the product relies on: WAL journal, foreign keys,
 * a busy timeout, and synchronous=FULL (every table here holds someone's work: cases, traces,
 * annotations, money), then applies the committed migrations.
 */
export function openDatabase(url: string, opts: { migrate?: boolean } = {}): Db {
  const file = url.replace(/^file:/, "");
  if (file !== ":memory:") fs.mkdirSync(path.dirname(path.resolve(file)), { recursive: true });
  const sqlite = new Database(file);
  sqlite.pragma("journal_mode = WAL");
  sqlite.pragma("foreign_keys = ON");
  sqlite.pragma("busy_timeout = 5000");
  sqlite.pragma("synchronous = FULL");
  const db = drizzle(sqlite, { schema }) as Db;
  if (opts.migrate !== false) migrate(db, { migrationsFolder });
  const uow = embeddedUnitOfWork(sqlite, drizzle(sqlite, { schema }));
  db.write = uow.write;
  db.read = uow.read;
  return db;
}

export { schema };
