import type { AppContext } from "../context";

type Sweep = { name: string; everyMs: number; run: (ctx: AppContext) => Promise<void> | void };

/** Periodic sweeps (deadlines, offers, closing stale cases). Each runs once at start, then on its period. */
export const sweeps: Sweep[] = [];

export function startBackground(ctx: AppContext): { stop(): void } {
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
