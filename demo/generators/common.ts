import type { ParsedTrace } from "../../shared/trace/types";

/** A ParsedTrace of one or more uniformly sampled channels (as the parser would return it). */
export function makeTrace(
  sampleRateHz: number,
  channels: { name: string; unit: string | null; values: Float32Array }[],
  t0 = 0,
): ParsedTrace {
  const samples = channels[0]?.values.length ?? 0;
  return {
    samples,
    sampleRateHz,
    t0,
    durationS: samples / sampleRateHz,
    time: null,
    channels: channels.map((c) => {
      let min = Infinity;
      let max = -Infinity;
      for (let i = 0; i < c.values.length; i++) {
        const x = c.values[i];
        if (x < min) min = x;
        if (x > max) max = x;
      }
      return { name: c.name, unit: c.unit, values: c.values, min, max };
    }),
    warnings: [],
  };
}

/** smoothstep from 0 (x ≤ 0) to 1 (x ≥ 1) */
export function smoothstep(x: number): number {
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  return x * x * (3 - 2 * x);
}
