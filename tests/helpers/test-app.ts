import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { pino } from "pino";
import { startServer, type RunningServer } from "../../server/index";

export interface TestServer extends RunningServer {
  dir: string;
}

/**
 * A real server for one test file (or one test): its own temporary directory and SQLite file,
 * migrated fresh; the SMTP catcher and the Stripe fake on random ports; listening on 127.0.0.1:0.
 */
export async function startTestServer(overrides: Record<string, string> = {}): Promise<TestServer> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-test-"));
  const server = await startServer(
    {
      NODE_ENV: "test",
      PORT: "0",
      HOST: "127.0.0.1",
      DATABASE_URL: path.join(dir, "test.db"),
      DATA_DIR: dir,
      MAIL_CATCHER_PORT: "0",
      FAKE_STRIPE_PORT: "0",
      LOG_LEVEL: "silent",
      DEMO: "false",
      ...overrides,
    },
    pino({ level: "silent" }),
  );
  return {
    ...server,
    dir,
    async close() {
      await server.close();
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}
