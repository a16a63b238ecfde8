import type { AppContext } from "../context";

export interface Sweep {
  name: string;
  everyMs: number;
  run: (ctx: AppContext) => Promise<void> | void;
}

/**
 * Periodic sweeps (deadlines, offers, closing stale cases, payouts…): the list is handed over
 * where the server starts (server/index.ts). Each runs once at start, then on its period; none
 * runs under NODE_ENV=test (tests call them themselves).
 */
export function startBackground(ctx: AppContext, sweeps: readonly Sweep[]): { stop(): void } {
  if (ctx.env.NODE_ENV === "test") return { stop() {} };
  const timers: NodeJS.Timeout[] = [];
  for (const s of sweeps) {
    const tick = async () => {
      try {
        await s.run(ctx);
      } catch (err) {
        ctx.logger.error({ err, sweep: s.name }, "background sweep failed");
      }
    };
    void tick();
    const t = setInterval(tick, s.everyMs);
    t.unref();
    timers.push(t);
  }
  return { stop: () => timers.forEach(clearInterval) };
}
