/**
 * `npm run demo:reset`: deletes the database file and the data the app keeps beside it (uploaded
 * originals, parsed traces, photos, temp uploads, caught mail, the local Stripe fake's state),
 * then starts the app once on its usual ports — migrating the fresh database — seeds the demo
 * and stops again. Refuses while the app is running on the same port, and in production.
 */
import fs from "node:fs";
import path from "node:path";
import { loadEnv } from "../server/env";
import { startServer } from "../server/index";
import { storageLayout } from "../server/services/storage";
import { whenMailSent } from "../server/services/notifications";
import { seedDemo, DEMO_PASSWORD, DEMO_SIGN_INS } from "./seed";

async function portAnswers(port: number): Promise<boolean> {
  try {
    const res = await fetch(`http://127.0.0.1:${port}/api/health`, { signal: AbortSignal.timeout(1500) });
    return res.status > 0;
  } catch {
    return false;
  }
}

function remove(p: string, removed: string[]): void {
  if (!fs.existsSync(p)) return;
  fs.rmSync(p, { recursive: true, force: true });
  removed.push(p);
}

async function main(): Promise<void> {
  const env = loadEnv(process.env);
  if (env.NODE_ENV === "production")
    throw new Error("demo:reset deletes the database; it is refused with NODE_ENV=production.");
  if (!env.DEMO) throw new Error("demo:reset needs DEMO on (it is the default); DEMO is set to false.");
  if (await portAnswers(env.PORT)) {
    throw new Error(
      `Burnline is running on port ${env.PORT}. Stop it first (Ctrl+C where \`npm start\` runs), then run \`npm run demo:reset\` again.`,
    );
  }

  const started = performance.now();
  const removed: string[] = [];
  const dbFile = path.resolve(env.DATABASE_URL.replace(/^file:/, ""));
  for (const suffix of ["", "-wal", "-shm", "-journal"]) remove(dbFile + suffix, removed);
  const layout = storageLayout(env.dataDir);
  for (const dir of [
    layout.originalsDir,
    layout.tracesDir,
    layout.photosDir,
    path.dirname(layout.tempDir),
    path.join(env.dataDir, "mail"),
  ])
    remove(dir, removed);
  remove(path.join(env.dataDir, "fake-stripe.json"), removed);
  console.log(
    removed.length
      ? `Removed:\n${removed.map((r) => `  ${path.relative(process.cwd(), r) || r}`).join("\n")}`
      : "Nothing to remove.",
  );

  // The same start as `npm start` (same ports, so the stored checkout and return links stay valid).
  const server = await startServer({ LOG_LEVEL: process.env.LOG_LEVEL ?? "warn" });
  try {
    const result = await seedDemo(server.ctx, { log: (line) => console.log(line) });
    const counts = Object.keys(result.cases).length;
    console.log(
      `\nSeeded ${counts} cases, ${Object.values(result.traces).flat().length} traces, ${result.casebookEntries} casebook entries in ${(result.timings.total / 1000).toFixed(1)} s.`,
    );
    if (result.skipped.length) console.log(`Left out (no local Stripe fake to pay them): ${result.skipped.join(", ")}`);
    console.log(`\nDemo sign-ins (password "${DEMO_PASSWORD}"):`);
    for (const s of DEMO_SIGN_INS) console.log(`  ${s.email.padEnd(24)} ${s.label}`);
  } finally {
    await whenMailSent();
    await server.close();
  }
  console.log(`\nDone in ${((performance.now() - started) / 1000).toFixed(1)} s. Start the app with \`npm start\`.`);
}

main().then(
  () => process.exit(0),
  (err) => {
    console.error(err instanceof Error ? err.message : err);
    process.exit(1);
  },
);
