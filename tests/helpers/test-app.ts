import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { pino } from "pino";
import { startServer, type RunningServer } from "../../server/index";
import { openDatabase, type Db } from "../../server/db/client";
import { startSqld, testDatabase, type RunningProcess } from "./servers";

export interface TestServer extends RunningServer {
  dir: string;
}

/**
 * The database URL for one test server (or one test database): a SQLite file in `dir`, or — with
 * TEST_DATABASE=libsql — a fresh libSQL server of its own, stopped by the returned `stop`.
 */
export async function testDatabaseUrl(dir: string): Promise<{ url: string; stop: () => Promise<void> }> {
  if (testDatabase() === "file") return { url: path.join(dir, "test.db"), stop: async () => {} };
  const sqld: RunningProcess = await startSqld();
  return { url: sqld.url, stop: () => sqld.close() };
}

/**
 * A real server for one test file (or one test): its own temporary directory and database (a fresh
 * SQLite file, or its own libSQL server with TEST_DATABASE=libsql), migrated fresh; the SMTP catcher
 * and the Stripe fake on random ports; listening on 127.0.0.1:0.
 */
export async function startTestServer(overrides: Record<string, string> = {}): Promise<TestServer> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-test-"));
  const database = overrides.DATABASE_URL
    ? { url: overrides.DATABASE_URL, stop: async () => {} }
    : await testDatabaseUrl(dir);
  let server: RunningServer;
  try {
    server = await startServer(
      {
        NODE_ENV: "test",
        PORT: "0",
        HOST: "127.0.0.1",
        DATABASE_URL: database.url,
        DATA_DIR: dir,
        MAIL_CATCHER_PORT: "0",
        FAKE_STRIPE_PORT: "0",
        LOG_LEVEL: "silent",
        DEMO: "false",
        ...overrides,
      },
      pino({ level: "silent" }),
    );
  } catch (err) {
    await database.stop();
    throw err;
  }
  return {
    ...server,
    dir,
    async close() {
      await server.close();
      await database.stop();
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** A migrated database of its own for a test (a file, or its own libSQL server with TEST_DATABASE=libsql). */
export async function openTestDatabase(): Promise<{ db: Db; close: () => Promise<void> }> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-db-"));
  const database = await testDatabaseUrl(dir);
  const db = await openDatabase(database.url);
  return {
    db,
    async close() {
      await db.close();
      await database.stop();
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}
