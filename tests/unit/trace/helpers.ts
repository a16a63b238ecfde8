import type { ParsedTrace } from "../../../shared/trace/types";
import { createRng, type Rng } from "../../helpers/prng";

/** A random trace: n samples, c channels, uniform time or (uneven) random positive steps. */
export function randomTrace(rng: Rng, n: number, channels: number, uneven: boolean): ParsedTrace {
  const rate = rng.pick([1, 1000, 44_100, 1e6, 2.5e7]);
  const t0 = (rng.range(-1, 1) / rate) * rng.int(0, 1000);
  let time: Float64Array | null = null;
  if (uneven) {
    time = new Float64Array(n);
    let t = t0;
    for (let i = 0; i < n; i++) {
      time[i] = t;
      t += (0.05 + rng.next() * 2) / rate;
    }
  }
  const chans = Array.from({ length: channels }, (_, c) => {
    const values = new Float32Array(n);
    let x = 0;
    for (let i = 0; i < n; i++) {
      x += rng.normal();
      values[i] = i % 997 === 0 ? rng.range(-500, 500) : x * (c + 1);
    }
    let min = Infinity;
    let max = -Infinity;
    for (const v of values) {
      min = Math.min(min, v);
      max = Math.max(max, v);
    }
    return { name: `Ch${c + 1}`, unit: "V", values, min, max };
  });
  const sampleRateHz = time && n > 1 ? (n - 1) / (time[n - 1] - time[0]) : rate;
  return {
    samples: n,
    sampleRateHz,
    t0: time ? time[0] : t0,
    durationS: n / sampleRateHz,
    time,
    channels: chans,
    warnings: [],
  };
}

/** A random window around the trace: may start before it, end after it, or miss it. */
export function randomWindow(rng: Rng, trace: ParsedTrace): [number, number] {
  const start = trace.t0;
  const dur = trace.durationS;
  const span = dur * Math.pow(10, rng.range(-4, 0.3));
  const t0 = start + rng.range(-0.2, 1.05) * dur;
  return [t0, t0 + span];
}

export { createRng };
