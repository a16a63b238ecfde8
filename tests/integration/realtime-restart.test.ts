import { afterAll, describe, expect, it } from "vitest";
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { pino } from "pino";
import { startServer, type RunningServer } from "../../server/index";
import { openDatabase } from "../../server/db/client";
import type { AppContext } from "../../server/context";
import { createExpert, createShopTeam, signIn } from "../factories";
import type { AnnotationRecord } from "../../shared/realtime";
import { ask, connected, insertLiveCase, liveClient, type LiveClient } from "./realtime-helpers";

/**
 * "Killing the server right after an acknowledgement loses nothing": the server runs in a child
 * process that is sent SIGKILL (no shutdown code runs, as in a crash or power cut of the process)
 * from inside the callback of an acknowledgement. A new server on the same SQLite file must then
 * hold every acknowledged record with the same seq. SQLite documents that with WAL and
 * synchronous=FULL a committed transaction is durable (sqlite.org/pragma.html#pragma_synchronous),
 * and the ack is sent only after the commit.
 */

const dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-restart-"));
const env = {
  NODE_ENV: "test",
  PORT: "0",
  HOST: "127.0.0.1",
  DATABASE_URL: path.join(dir, "live.db"),
  DATA_DIR: dir,
  MAIL_CATCHER_PORT: "0",
  FAKE_STRIPE_PORT: "0",
  LOG_LEVEL: "silent",
  DEMO: "false",
  AUTH_SECRET: "burnline-restart-test-secret-0123456789abcdef",
};
const children: ChildProcess[] = [];
const servers: RunningServer[] = [];
const sockets: LiveClient[] = [];

/** startServer in a child process; resolves with its port once it listens. */
function startChild(): Promise<{ child: ChildProcess; port: number }> {
  const entry = pathToFileURL(path.resolve("server/index.ts")).href;
  const code = `const { startServer } = await import(${JSON.stringify(entry)}); const s = await startServer(); process.stdout.write("READY " + s.port + "\\n");`;
  const child = spawn(process.execPath, ["--import", "tsx", "--input-type=module", "-e", code], {
    env: { ...process.env, ...env },
    stdio: ["ignore", "pipe", "inherit"],
  });
  children.push(child);
  return new Promise((resolve, reject) => {
    let out = "";
    child.stdout!.on("data", (d) => {
      out += String(d);
      const m = /READY (\d+)/.exec(out);
      if (m) resolve({ child, port: Number(m[1]) });
    });
    child.on("exit", (code) => reject(new Error(`server child exited early (${code})`)));
  });
}

afterAll(async () => {
  for (const s of sockets) s.disconnect();
  for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill("SIGKILL");
  for (const s of servers) await s.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe("a server killed right after an acknowledgement", () => {
  it("loses nothing that was acknowledged; the next server continues the seq", async () => {
    const { child, port } = await startChild();

    // users and a claimed case, written straight into the same SQLite file
    const db = await openDatabase(env.DATABASE_URL, { migrate: false });
    const ctx = { db, now: () => new Date() } as unknown as AppContext;
    const team = await createShopTeam(ctx);
    const e = await createExpert(ctx);
    const c = await insertLiveCase(ctx, { shopId: team.shop.id, createdBy: team.technicians[0].id, expertId: e.id });
    await db.close();

    const expert = await signIn({ port }, e);
    const url = `http://127.0.0.1:${port}`;
    const s = await connected(liveClient(url, { cookie: expert.cookie }));
    sockets.push(s);
    const join = await ask(s, "case:join", { caseId: c.caseId });
    expect(join.ok).toBe(true);

    // 60 creates in flight at once; SIGKILL from inside the 25th acknowledgement
    const acked: AnnotationRecord[] = [];
    const exited = new Promise<void>((r) => child.once("exit", () => r()));
    for (let i = 0; i < 60; i++) {
      s.emit("annotation:create", { traceId: c.traceId, kind: "pin", t0: (i + 1) * 0.001, label: `k${i}` }, (r) => {
        if (!r.ok) return;
        acked.push(r.annotation);
        if (acked.length === 25) child.kill("SIGKILL");
      });
    }
    await exited;
    expect(child.signalCode).toBe("SIGKILL");
    expect(acked.length).toBeGreaterThanOrEqual(25);

    // a new server on the same files
    const next = await startServer({ ...env }, pino({ level: "silent" }));
    servers.push(next);
    const again = await signIn(next, e);
    const rest = await again.get(`/api/cases/${c.caseId}/annotations`);
    expect(rest.status).toBe(200);
    const stored = new Map<string, AnnotationRecord>(rest.body.annotations.map((a: AnnotationRecord) => [a.id, a]));
    for (const a of acked) expect(stored.get(a.id)).toEqual(a);
    const seqs = rest.body.annotations.map((a: AnnotationRecord) => a.seq);
    expect(seqs).toEqual(Array.from({ length: seqs.length }, (_, i) => i + 1)); // no gap, no duplicate
    expect(rest.body.seq).toBe(seqs.length);

    // a client that saw the acknowledged ones re-joins with since and gets only what came after
    const lastAcked = Math.max(...acked.map((a) => a.seq));
    const s2 = await connected(liveClient(`http://127.0.0.1:${next.port}`, { cookie: again.cookie }));
    sockets.push(s2);
    const rejoin = await ask(s2, "case:join", { caseId: c.caseId, since: lastAcked });
    expect(rejoin.ok && rejoin.annotations.map((a) => a.seq)).toEqual(seqs.filter((q: number) => q > lastAcked));
    const more = await ask(s2, "annotation:create", { traceId: c.traceId, kind: "level", t0: 0.01, level: 7.5 });
    expect(more.ok && more.annotation.seq).toBe(seqs.length + 1);
  }, 90_000);
});
