import { afterAll, beforeAll, describe, expect, it } from "vitest";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { defaultThreads, PoolFullError, runIngest, startFollower, WorkPool } from "../../../server/uploads/pool";
import { captureCsv } from "../../integration/upload-helpers";

/**
 * The upload pool: work runs on worker threads (node:worker_threads gives the main thread id 0),
 * jobs start in arrival order, a job that finds every thread busy is told its place in line (and
 * told again as the line moves), and a line at its length refuses more. The pool is sized to the
 * machine: os.availableParallelism() less one for the event loop, at least one.
 */
const dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-pool-"));
const capture = captureCsv({ seed: 2 });
const src = path.join(dir, "c.csv");
let pool: WorkPool;

beforeAll(() => {
  fs.writeFileSync(src, capture.bytes);
  pool = new WorkPool(1, 1);
});
afterAll(async () => {
  await pool.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe("upload pool", () => {
  it("is sized to the machine", () => {
    expect(defaultThreads()).toBe(Math.max(1, Math.min(8, os.availableParallelism() - 1)));
  });

  it("runs tasks off the main thread", async () => {
    expect(await pool.run<number>("ping", null)).toBeGreaterThan(0);
  });

  it("queues in arrival order, says where each job stands, and refuses beyond the line's length", async () => {
    const events: string[] = [];
    const job = (n: number) =>
      runIngest(
        pool,
        {
          source: src,
          encoding: "auto",
          tempDir: dir,
          tracesDir: dir,
          traceId: `t${n}`,
          settings: { kind: "generic", voltsPerDiv: 1, timePerDivS: 0.01 } as never,
          maxBytes: 1e9,
          skipAnalysis: true,
        },
        { onQueued: (p) => events.push(`${n} queued ${p}`), onStart: () => events.push(`${n} start`) },
      ).then((r) => {
        events.push(`${n} done`);
        return r;
      });
    const a = job(1);
    const b = job(2);
    const c = job(3).catch((e) => e);
    expect(await c).toBeInstanceOf(PoolFullError);
    expect(pool.stats()).toMatchObject({ threads: 1, running: 1, waiting: 1, maxWaiting: 1 });
    const [ra, rb] = await Promise.all([a, b]);
    expect(ra.ok && rb.ok).toBe(true);
    if (ra.ok) expect(ra.meta.samples).toBe(capture.samples); // the generator's sample count
    // job 2 gets the thread the moment job 1 gives it back, before job 1's caller hears the result
    expect(events).toEqual(["1 start", "2 queued 1", "2 start", "1 done", "2 done"]);
  });

  it("a follower reads a file while it is written and gives the same result as reading it whole", async () => {
    const growing = path.join(dir, "growing.csv");
    const half = capture.bytes.indexOf("\n", capture.bytes.length >> 1) + 1;
    fs.writeFileSync(growing, capture.bytes.subarray(0, half));
    const settings = { kind: "generic", voltsPerDiv: 1, timePerDivS: 0.01 } as never;
    const f = startFollower(pool, {
      source: growing,
      encoding: "identity",
      tempDir: dir,
      tracesDir: dir,
      traceId: "f1",
      settings,
      maxBytes: 1e9,
      skipAnalysis: true,
    });
    f.grow(half);
    await new Promise((r) => setTimeout(r, 300));
    fs.appendFileSync(growing, capture.bytes.subarray(half));
    const followed = await f.end(capture.bytes.length);
    const whole = await runIngest(pool, {
      source: src,
      encoding: "auto",
      tempDir: dir,
      tracesDir: dir,
      traceId: "w1",
      settings,
      maxBytes: 1e9,
      skipAnalysis: true,
    });
    expect(followed.ok && whole.ok).toBe(true);
    if (followed.ok && whole.ok) {
      expect(followed.meta).toEqual(whole.meta);
      expect(followed.sha256).toBe(whole.sha256);
      expect(followed.meta.samples).toBe(capture.samples);
      expect(fs.readFileSync(followed.dataFile).equals(fs.readFileSync(whole.dataFile))).toBe(true);
    }
  });
});
