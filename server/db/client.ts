import Database from "better-sqlite3";
import { drizzle as drizzleSqlite, type BetterSQLite3Database } from "drizzle-orm/better-sqlite3";
import { migrate as migrateSqlite } from "drizzle-orm/better-sqlite3/migrator";
import { createClient, type Client } from "@libsql/client/http";
import { drizzle as drizzleLibsql } from "drizzle-orm/libsql/http";
import type { LibSQLDatabase } from "drizzle-orm/libsql/driver-core";
import type { BatchItem, BatchResponse } from "drizzle-orm/batch";
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import * as schema from "./schema/index";
import { embeddedUnitOfWork, Gate, libsqlUnitOfWork, type Tx, type UnitOfWork } from "./unit-of-work";
import { migrateLibsql } from "./migrate-libsql";

export type { Tx, UnitOfWork };

/** drizzle over one of the two drivers (better-auth's adapter and the migrators take it). */
export type Orm = BetterSQLite3Database<typeof schema> | LibSQLDatabase<typeof schema>;

/** A statement of a batch: a query built on the handle that `batch` passes. */
export type Statement = BatchItem<"sqlite">;

/**
 * The database, whichever driver is behind it (docs/decisions/016 and 020). Every query runs in a
 * unit: `db.read(async (tx) => …)` for a consistent snapshot, `db.write(async (tx) => …)` for a
 * change, `db.batch(mode, (q) => [...])` for a fixed list of statements in one round trip. A body
 * awaits only the database.
 *
 * - `file`: an embedded SQLite file through better-sqlite3 (the default: `npm start` on one machine).
 * - `libsql`: a libSQL server (sqld, or the hosted service) through @libsql/client over HTTP, shared
 *   by several app nodes.
 */
export interface Db extends UnitOfWork {
  readonly driver: "file" | "libsql";
  /**
   * Runs the statements `build` returns in one transaction, in one round trip on the libSQL server
   * (one `BEGIN … COMMIT` batch); all or nothing. Each result is what awaiting the statement gives:
   * rows for a select or a `.returning()`; use `.returning()` where the outcome matters.
   */
  batch<T extends readonly [Statement, ...Statement[]]>(
    mode: "read" | "write",
    build: (q: Tx) => T,
  ): Promise<BatchResponse<T>>;
  /** drizzle on the driver itself, outside units: for better-auth's adapter only */
  readonly orm: Orm;
  /** the better-sqlite3 connection of the `file` driver (null on libSQL) */
  readonly sqlite: Database.Database | null;
  close(): Promise<void>;
}

const migrationsFolder = path.join(path.dirname(fileURLToPath(import.meta.url)), "migrations");
export { migrationsFolder };

/** Is this DATABASE_URL a libSQL server (libsql://, http(s)://, ws(s)://) rather than a file? */
export function isServerUrl(url: string): boolean {
  return /^(libsql|https?|wss?):\/\//i.test(url);
}

export interface OpenOptions {
  /** apply the committed migrations (default true) */
  migrate?: boolean;
  /** DATABASE_AUTH_TOKEN, sent to a libSQL server when set */
  authToken?: string;
  /** DATABASE_CONCURRENCY: at most this many units and batches open on a libSQL server at once */
  concurrency?: number;
}

/**
 * Opens the database named by DATABASE_URL: a libSQL server for `libsql://…`, `http(s)://…`; a
 * SQLite file otherwise. Migrations are applied unless `migrate: false`.
 */
export async function openDatabase(url: string, opts: OpenOptions = {}): Promise<Db> {
  return isServerUrl(url) ? openLibsql(url, opts) : openFile(url, opts);
}

/**
 * The SQLite file with the pragmas the product relies on: WAL journal, foreign keys, a busy
 * timeout, and synchronous=FULL (every table here holds someone's work: cases, traces,
 * annotations, money), then the committed migrations.
 */
export function openFile(url: string, opts: OpenOptions = {}): Db {
  const file = url.replace(/^file:/, "");
  if (file !== ":memory:") fs.mkdirSync(path.dirname(path.resolve(file)), { recursive: true });
  const sqlite = new Database(file);
  sqlite.pragma("journal_mode = WAL");
  sqlite.pragma("foreign_keys = ON");
  sqlite.pragma("busy_timeout = 5000");
  sqlite.pragma("synchronous = FULL");
  const orm = drizzleSqlite(sqlite, { schema });
  if (opts.migrate !== false) migrateSqlite(orm, { migrationsFolder });
  const uow = embeddedUnitOfWork(sqlite, drizzleSqlite(sqlite, { schema }));
  return {
    driver: "file",
    write: uow.write,
    read: uow.read,
    batch: (mode, build) =>
      uow[mode](async (tx) => {
        const out: unknown[] = [];
        for (const q of build(tx)) out.push(await q);
        return out as never;
      }),
    orm,
    sqlite,
    async close() {
      if (sqlite.open) sqlite.close();
    },
  };
}

/** A libSQL server over HTTP (`libsql://` is served over HTTPS by the hosted service). */
export async function openLibsql(url: string, opts: OpenOptions = {}): Promise<Db> {
  const client: Client = createClient({ url, authToken: opts.authToken || undefined });
  const orm = drizzleLibsql(client, { schema }) as LibSQLDatabase<typeof schema> & { $client: Client };
  try {
    if (opts.migrate !== false) await migrateLibsql(client, orm, migrationsFolder);
  } catch (err) {
    client.close();
    throw err;
  }
  const gate = new Gate(opts.concurrency ?? 32);
  const uow = libsqlUnitOfWork(client, orm, gate);
  return {
    driver: "libsql",
    write: uow.write,
    read: uow.read,
    batch: (mode, build) => gate.run(() => libsqlBatch(client, orm, mode, build)),
    orm,
    sqlite: null,
    async close() {
      client.close();
    },
  };
}

/** drizzle's own batch (LibSQLSession.batch) with the transaction mode chosen by the caller. */
async function libsqlBatch<T extends readonly [Statement, ...Statement[]]>(
  client: Client,
  orm: LibSQLDatabase<typeof schema>,
  mode: "read" | "write",
  build: (q: Tx) => T,
): Promise<BatchResponse<T>> {
  const prepared = build(orm as unknown as Tx).map((q) => (q as unknown as Preparable)._prepare());
  const built = prepared.map((p) => {
    const b = p.getQuery();
    return { sql: b.sql, args: b.params as never };
  });
  const results = await refusedAgain(() => client.batch(built, mode));
  return results.map((r, i) => prepared[i].mapResult(r, true)) as BatchResponse<T>;
}

/** The server refused the request for load (HTTP 429) and did nothing of it. */
function refusedForLoad(err: unknown): boolean {
  for (let e = err as { status?: unknown; message?: unknown; cause?: unknown } | null, d = 0; e && d < 5; d++) {
    if (e.status === 429 || /HTTP status 429/.test(String(e.message ?? ""))) return true;
    e = e.cause as typeof e;
  }
  return false;
}

/**
 * A batch is one request, one transaction on the server: one the server refused for load was not
 * run at all, so it is sent again after a short pause (50 ms doubling, with jitter; 6 tries).
 */
async function refusedAgain<T>(send: () => Promise<T>): Promise<T> {
  for (let attempt = 1; ; attempt++) {
    try {
      return await send();
    } catch (err) {
      if (attempt >= 6 || !refusedForLoad(err)) throw err;
      await new Promise((r) => setTimeout(r, 50 * 2 ** (attempt - 1) * (0.8 + 0.4 * Math.random())));
    }
  }
}

interface Preparable {
  _prepare(): { getQuery(): { sql: string; params: unknown[] }; mapResult(r: unknown, isFromBatch: boolean): unknown };
}

/**
 * The better-sqlite3 drizzle database behind a `file` Db, for code not yet moved onto units
 * (transitional: it throws on the libSQL server).
 */
export function syncDb(db: Db): EmbeddedDb {
  if (db.driver !== "file") throw new Error("This code path still uses the embedded driver's synchronous API.");
  return db.orm as EmbeddedDb;
}
export type EmbeddedDb = BetterSQLite3Database<typeof schema> & { $client: Database.Database };

/** A synchronous transaction of the embedded database (transitional). */
export type SyncTx = Parameters<Parameters<EmbeddedDb["transaction"]>[0]>[0];

export { schema };
