import { Queue, Worker } from "bullmq";
import type { AppContext } from "../context";
import type { SharedRedis } from "../cluster/redis";

export interface Sweep {
  name: string;
  everyMs: number;
  run: (ctx: AppContext) => Promise<unknown> | unknown;
}

export interface Background {
  stop(): Promise<void>;
}

/** The BullMQ queue the sweeps run on when there is a shared Redis (its keys start with `bl:`). */
export const SWEEP_QUEUE = "sweeps";
export const QUEUE_PREFIX = "bl";

/**
 * Periodic sweeps (deadlines, offers, closing stale cases, payouts…): the list is handed over
 * where the server starts (server/index.ts). None runs under NODE_ENV=test (tests call them
 * themselves).
 *
 * - One node (no REDIS_URL): timers in the process; each sweep runs once at start, then on its period.
 * - Several nodes (REDIS_URL): BullMQ job schedulers on the shared Redis. Every node registers the
 *   same schedulers at start (an upsert: still one scheduler per sweep) and runs a worker; each
 *   period's job has one id (`repeat:<sweep>:<slot>`), so it runs once, on whichever node takes it.
 *   A node that dies in mid-run leaves its job to be run again, which is why every sweep's
 *   changes are conditional updates that a second run finds already done.
 */
export async function startBackground(
  ctx: AppContext,
  sweeps: readonly Sweep[],
  redis: SharedRedis | null = null,
): Promise<Background> {
  if (ctx.env.NODE_ENV === "test") return { stop: async () => {} };
  return redis ? startQueued(ctx, sweeps, redis) : startTimers(ctx, sweeps);
}

async function runSweep(ctx: AppContext, s: Sweep): Promise<unknown> {
  try {
    return await s.run(ctx);
  } catch (err) {
    ctx.logger.error({ err, sweep: s.name }, "background sweep failed");
    throw err;
  }
}

function startTimers(ctx: AppContext, sweeps: readonly Sweep[]): Background {
  const timers: NodeJS.Timeout[] = [];
  for (const s of sweeps) {
    const tick = () => void runSweep(ctx, s).catch(() => {});
    tick();
    const t = setInterval(tick, s.everyMs);
    t.unref();
    timers.push(t);
  }
  return { stop: async () => timers.forEach(clearInterval) };
}

async function startQueued(ctx: AppContext, sweeps: readonly Sweep[], redis: SharedRedis): Promise<Background> {
  // BullMQ needs connections that retry forever (maxRetriesPerRequest: null) on a Redis that never evicts
  const queue = new Queue(SWEEP_QUEUE, {
    connection: redis.connection({ maxRetriesPerRequest: null }),
    prefix: QUEUE_PREFIX,
  });
  for (const s of sweeps) {
    await queue.upsertJobScheduler(
      s.name,
      { every: s.everyMs },
      { name: s.name, opts: { removeOnComplete: 200, removeOnFail: 200, attempts: 1 } },
    );
  }
  const byName = new Map(sweeps.map((s) => [s.name, s]));
  const worker = new Worker(
    SWEEP_QUEUE,
    async (job) => {
      const s = byName.get(job.name);
      if (!s) return null; // a sweep this node's version does not have
      const out = await runSweep(ctx, s);
      return { node: redis.nodeId, result: out ?? null };
    },
    { connection: redis.connection({ maxRetriesPerRequest: null }), prefix: QUEUE_PREFIX, concurrency: 1 },
  );
  worker.on("error", (err) => ctx.logger.warn({ err: err.message }, "sweep worker error"));
  return {
    async stop() {
      await worker.close();
      await queue.close();
    },
  };
}
