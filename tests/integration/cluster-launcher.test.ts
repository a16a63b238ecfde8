import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { spawn, type ChildProcess } from "node:child_process";
import { randomUUID } from "node:crypto";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { io as connectClient, type Socket } from "socket.io-client";
import { clusterPlan, findBinaries, portFree, STICKY_COOKIE, type ClusterPlan } from "../../scripts/cluster/lib";

/**
 * `npm run cluster` with two nodes, as a user runs it: a real Redis, the real libSQL server, HAProxy
 * in front. What is checked comes from outside the code under test: HTTP status codes, the balancer's
 * own round-robin and cookie stickiness (HAProxy's documented `balance roundrobin` and `cookie …
 * insert`), and the engine.io protocol (github.com/socketio/engine.io-protocol, v4): a long-polling
 * session lives on the node that opened it, and any other node answers 400 "Session ID unknown"
 * to a request naming its sid, so a polling client that completes round trips through the balancer
 * was kept on one node. On SIGTERM nothing the launcher started may survive (no pid, no port).
 */

const { missing } = findBinaries();
const skipReason = missing.length ? ` (skipped, missing: ${missing.join(" ")})` : "";
if (missing.length) console.warn(`cluster launcher tests skipped:\n  ${missing.join("\n  ")}`);

const DEMO_TECH = { email: "tech@burnline.test", password: "burnline-demo" };
type Client = Socket;

/** A base port with the whole block free (front, 2 nodes, Redis, libSQL, mail, Stripe fake). */
async function freeBlock(): Promise<number> {
  for (let attempt = 0; attempt < 40; attempt++) {
    const base = 20_000 + Math.floor(Math.random() * 20_000);
    const ports = Array.from({ length: 7 }, (_, i) => base + i);
    let free = true;
    for (const p of ports) if (!(await portFree(p))) free = false;
    if (free) return base;
  }
  throw new Error("no free block of 7 ports on loopback");
}

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
}

/** The cookies of a response as one Cookie header value. */
function cookiesOf(res: Response): string {
  return res.headers
    .getSetCookie()
    .map((c) => c.split(";")[0])
    .join("; ");
}

function client(url: string, transport: "polling" | "websocket", cookie: string, origin: string): Client {
  return connectClient(url, {
    transports: [transport],
    forceNew: true,
    reconnection: false,
    timeout: 5000,
    extraHeaders: { cookie, origin },
  });
}

function connected(s: Client): Promise<void> {
  return new Promise((resolve, reject) => {
    s.once("connect", () => resolve());
    s.once("connect_error", (err) => reject(err));
  });
}

/** One acknowledged event: joining a case that does not exist answers not-found, with no side effect. */
function roundTrip(s: Client): Promise<{ ok: boolean; error?: { code: string } }> {
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error("no acknowledgement")), 5000);
    s.once("disconnect", (reason) => reject(new Error(`disconnected: ${reason}`)));
    s.emit("case:join", { caseId: randomUUID() }, (res: { ok: boolean; error?: { code: string } }) => {
      clearTimeout(timer);
      resolve(res);
    });
  });
}

describe.skipIf(missing.length > 0)(`npm run cluster with two nodes${skipReason}`, () => {
  let plan: ClusterPlan;
  let dataDir: string;
  let launcher: ChildProcess;
  let out = "";
  let pids: Record<string, number> = {};
  const sockets: Client[] = [];

  beforeAll(async () => {
    dataDir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-cluster-"));
    const env = { ...process.env, PORT: String(await freeBlock()), NODES: "2", DATA_DIR: dataDir, LOG_LEVEL: "warn" };
    plan = clusterPlan(env);
    launcher = spawn(process.execPath, ["--import", "tsx", "scripts/cluster.ts", "--no-build"], {
      env,
      stdio: ["ignore", "pipe", "pipe"],
    });
    launcher.stderr!.on("data", (d) => (out += String(d)));
    await new Promise<void>((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error(`launcher not ready in 100 s:\n${out}`)), 100_000);
      launcher.stdout!.on("data", (d) => {
        out += String(d);
        if (/^READY$/m.test(out)) {
          clearTimeout(timer);
          resolve();
        }
      });
      launcher.once("exit", (code) => reject(new Error(`launcher exited (${code}):\n${out}`)));
    });
    pids = JSON.parse(fs.readFileSync(path.join(plan.runDir, "pids.json"), "utf8")) as Record<string, number>;
  }, 110_000);

  afterAll(async () => {
    for (const s of sockets) s.close();
    if (launcher && launcher.exitCode === null && launcher.signalCode === null) {
      launcher.kill("SIGTERM");
      await new Promise((r) => launcher.once("exit", r));
    }
    for (const pid of Object.values(pids)) if (alive(pid)) process.kill(pid, "SIGKILL");
    fs.rmSync(dataDir, { recursive: true, force: true });
  }, 30_000);

  it("prints the front URL and each node's URL, and seeded the demo once", () => {
    expect(out).toContain(`front (balancer)  http://localhost:${plan.port}`);
    for (const p of plan.nodePorts) expect(out).toContain(`http://127.0.0.1:${p}`);
    expect(out).toMatch(/Demo seeded/);
    // the shared folder holds what the services write
    expect(fs.existsSync(path.join(plan.libsqlDir, "dbs"))).toBe(true);
    expect(fs.existsSync(path.join(plan.redisDir, "appendonlydir"))).toBe(true);
  });

  it("answers /api/health through the balancer, which spreads cookie-less requests over both nodes", async () => {
    const served = new Set<string>();
    for (let i = 0; i < 4; i++) {
      const res = await fetch(`http://127.0.0.1:${plan.port}/api/health`);
      expect(res.status).toBe(200);
      expect(await res.json()).toEqual({ ok: true, ready: true });
      served.add(res.headers.get("x-burnline-node") ?? "?");
    }
    // HAProxy's roundrobin alternates between the two healthy servers
    expect([...served].sort()).toEqual(["node1", "node2"]);
  });

  it("each node answers on its own port", async () => {
    for (const p of plan.nodePorts) {
      const res = await fetch(`http://127.0.0.1:${p}/api/health`);
      expect(res.status).toBe(200);
      expect(await res.json()).toEqual({ ok: true, ready: true });
    }
  });

  it("runs the nodes on the libSQL server: a session made on node 1 is known to node 2; no SQLite file", async () => {
    const [one, two] = plan.nodePorts.map((p) => `http://127.0.0.1:${p}`);
    const origin = `http://localhost:${plan.port}`;
    const signIn = await fetch(`${one}/api/auth/sign-in/email`, {
      method: "POST",
      headers: { "content-type": "application/json", origin },
      body: JSON.stringify(DEMO_TECH),
    });
    expect(signIn.status).toBe(200);
    const me = await fetch(`${two}/api/me`, { headers: { cookie: cookiesOf(signIn) } });
    expect(me.status).toBe(200);
    expect(((await me.json()) as { email: string }).email).toBe(DEMO_TECH.email);
    // the demo seeded once is the libSQL server's (its folder), not a file of the nodes
    const sqliteFiles = fs.readdirSync(dataDir).filter((f) => /\.(db|sqlite)$/.test(f));
    expect(sqliteFiles).toEqual([]);
  });

  it("keeps a long-polling socket.io client on one node through the balancer (sticky cookie)", async () => {
    const front = `http://127.0.0.1:${plan.port}`;
    const origin = `http://localhost:${plan.port}`;
    const first = await fetch(`${front}/api/health`);
    const sticky = cookiesOf(first);
    const node = first.headers.get("x-burnline-node")!;
    expect(sticky).toMatch(new RegExp(`^${STICKY_COOKIE}=node[12]$`));
    const signIn = await fetch(`${front}/api/auth/sign-in/email`, {
      method: "POST",
      headers: { "content-type": "application/json", cookie: sticky, origin },
      body: JSON.stringify(DEMO_TECH),
    });
    expect(signIn.status).toBe(200);
    expect(signIn.headers.get("x-burnline-node")).toBe(node);
    const session = cookiesOf(signIn);

    const s = client(front, "polling", `${session}; ${sticky}`, origin);
    sockets.push(s);
    await connected(s);
    for (let i = 0; i < 8; i++) expect(await roundTrip(s)).toMatchObject({ ok: false, error: { code: "not_found" } });
    expect(s.io.engine.transport.name).toBe("polling");
    // The session is the sticky node's alone: the other node does not know its sid.
    const other = plan.nodePorts[node === "node1" ? 1 : 0];
    const probe = await fetch(`http://127.0.0.1:${other}/socket.io/?EIO=4&transport=polling&sid=${s.io.engine.id}`, {
      headers: { origin },
    });
    expect(probe.status).toBe(400);
    expect(await probe.json()).toMatchObject({ code: 1, message: "Session ID unknown" });
    expect(s.connected).toBe(true);

    // Control: the same client without the balancer's cookie is spread over both nodes and breaks.
    const loose = client(front, "polling", session, origin);
    sockets.push(loose);
    const failed = await (async () => {
      try {
        await connected(loose);
        for (let i = 0; i < 8; i++) await roundTrip(loose);
        return false;
      } catch {
        return true;
      }
    })();
    expect(failed).toBe(true);

    // And a websocket is upgraded through the balancer.
    const ws = client(front, "websocket", `${session}; ${sticky}`, origin);
    sockets.push(ws);
    await connected(ws);
    expect(await roundTrip(ws)).toMatchObject({ ok: false, error: { code: "not_found" } });
  });

  it("stops everything it started on SIGTERM: no process, no listening port", async () => {
    expect(Object.keys(pids).sort()).toEqual(["haproxy", "launcher", "libsql", "node-1", "node-2", "prepare", "redis"]);
    for (const s of sockets) s.close();
    const exited = new Promise<number | null>((r) => launcher.once("exit", (code) => r(code)));
    launcher.kill("SIGTERM");
    expect(await exited).toBe(0);
    for (const [name, pid] of Object.entries(pids)) expect({ name, alive: alive(pid) }).toEqual({ name, alive: false });
    const ports = [plan.port, ...plan.nodePorts, plan.redisPort, plan.libsqlPort, plan.mailPort, plan.stripePort];
    for (const p of ports) expect({ port: p, free: await portFree(p) }).toEqual({ port: p, free: true });
  }, 30_000);
});
