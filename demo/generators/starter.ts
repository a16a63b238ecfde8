/**
 * Starter current while cranking, a second model built differently from compression.ts: the motor
 * and the engine are tied by the motor's back-EMF.
 *
 * At key-on the motor stands still and draws the stall current I_stall = V/R. As it speeds up its
 * back-EMF k·ω rises and the current falls; with the engine's speed approaching the cranking speed
 * as ω(t) = ω_c·(1 − e^(−t/τm)), the current without compression is
 * I(t) = I_c + (I_stall − I_c)·e^(−t/τm), with I_c the cranking current between strokes.
 * The crank angle is θ(t) = θ0 + ω_c·(t − τm·(1 − e^(−t/τm))). Each compression stroke adds a bump
 * in angle around its top dead centre (every 720°/N): rising over `riseDeg` as the piston compresses
 * the charge, falling faster over `fallDeg` after TDC, of height ΔI × the cylinder's factor.
 * Output in amperes, or in volts through a clamp of `mvPerAmp`; white noise in amperes.
 * Truth from the angles: one stroke per top dead centre after key-on (its bump's peak), its
 * cylinder's factor as the relative compression, and the cranking rpm from the strokes' spacing.
 */
import { createRng } from "../builders/prng";
import { makeTrace } from "./common";
import type { ParsedTrace } from "../../shared/trace/types";

export interface StarterOptions {
  seed?: number;
  sampleRateHz?: number;
  /** steady cranking speed; default 200 */
  crankingRpm?: number;
  cylinders?: number;
  durationS?: number;
  /** key-on time, s; default 0.05 */
  keyOnS?: number;
  /** stall and cranking currents, A; defaults 600 and 160 */
  stallA?: number;
  crankA?: number;
  /** motor spin-up time constant, s; default 0.06 */
  spinUpS?: number;
  /** a healthy stroke's bump, A; default 90 */
  strokeA?: number;
  /** per-cylinder factors (position 1..N from the first TDC after key-on); default all 1 */
  factors?: number[];
  riseDeg?: number;
  fallDeg?: number;
  /** crank angle at key-on as a fraction of the stroke spacing; default random */
  phase?: number;
  noiseA?: number;
  /** output volts at this clamp scale (mV per ampere); amperes when absent */
  mvPerAmp?: number;
}

export interface StarterStrokeTruth {
  /** top dead centre of this compression stroke (the bump's peak), s */
  timeS: number;
  position: number;
  /** the cylinder's factor (its stroke's bump is factor × strokeA) */
  factor: number;
  /** the factor as % of the highest (relative compression) */
  relativePct?: number;
  /** what is left of the inrush above the cranking current at that moment, A */
  inrushA: number;
}

export interface StarterTruth {
  strokes: StarterStrokeTruth[];
  /** every top dead centre inside the capture, complete or not, s */
  tdcTimesS: number[];
  /** from the peaks' spacing: 120·f/N */
  rpm: number;
  steadyRpm: number;
  cylinders: number;
  inrushPeakS: number;
}

export function generateStarter(opts: StarterOptions = {}): { trace: ParsedTrace; truth: StarterTruth } {
  const rng = createRng(opts.seed ?? 1);
  const rate = opts.sampleRateHz ?? 10e3;
  const rpm = opts.crankingRpm ?? 200;
  const N = opts.cylinders ?? 4;
  const duration = opts.durationS ?? 2.0;
  const tKey = opts.keyOnS ?? 0.05;
  const iStall = opts.stallA ?? 600;
  const iCrank = opts.crankA ?? 160;
  const tauM = opts.spinUpS ?? 0.06;
  const dI = opts.strokeA ?? 90;
  const factors = opts.factors ?? [];
  const rise = opts.riseDeg ?? 100;
  const fall = opts.fallDeg ?? 40;
  const spacing = 720 / N;
  const theta0 = -spacing * (opts.phase ?? rng.range(0.05, 0.95));
  const noise = opts.noiseA ?? 2;
  const wc = (rpm * 360) / 60; // degrees per second
  const angle = (t: number) => {
    const u = Math.max(0, t - tKey);
    return theta0 + wc * (u - tauM * (1 - Math.exp(-u / tauM)));
  };
  const bump = (phi: number) => {
    if (phi < -rise || phi > fall) return 0;
    return phi <= 0 ? 0.5 * (1 + Math.cos((Math.PI * phi) / rise)) : 0.5 * (1 + Math.cos((Math.PI * phi) / fall));
  };
  const current = (t: number) => {
    if (t < tKey) return 0;
    const u = t - tKey;
    const on = Math.min(1, u / 1e-3); // the motor's inductance: about 1 ms to full current
    let i = on * (iCrank + (iStall - iCrank) * Math.exp(-u / tauM));
    const th = angle(t);
    const k0 = Math.ceil((th - fall) / spacing);
    for (let k = Math.max(0, k0); k * spacing <= th + rise; k++)
      i += dI * (factors[k % N] ?? 1) * bump(th - k * spacing);
    return i;
  };
  const n = Math.round(duration * rate);
  const values = new Float32Array(n);
  const clean = new Float64Array(n);
  const out = opts.mvPerAmp ? opts.mvPerAmp / 1000 : 1;
  for (let i = 0; i < n; i++) {
    clean[i] = current(i / rate);
    values[i] = (clean[i] + noise * rng.normal()) * out;
  }
  // truth: one stroke per top dead centre (θ = k·720°/N) after key-on, complete when the current's
  // fall after it (half a stroke spacing) is inside the capture
  const strokes: StarterStrokeTruth[] = [];
  const timeOfAngle = (th: number) => {
    let lo = tKey;
    let hi = duration + 1;
    for (let it = 0; it < 60; it++) {
      const mid = (lo + hi) / 2;
      if (angle(mid) < th) lo = mid;
      else hi = mid;
    }
    return (lo + hi) / 2;
  };
  const tdcTimesS: number[] = [];
  for (let k = 0; timeOfAngle(k * spacing) < duration; k++) tdcTimesS.push(timeOfAngle(k * spacing));
  for (let k = 0; ; k++) {
    const t = timeOfAngle(k * spacing);
    const tNext = timeOfAngle((k + 0.5) * spacing);
    if (tNext > duration) break;
    const factor = factors[k % N] ?? 1;
    const u = t - tKey;
    strokes.push({ timeS: t, position: (k % N) + 1, factor, inrushA: (iStall - iCrank) * Math.exp(-u / tauM) });
  }
  const maxF = Math.max(...strokes.map((x) => x.factor));
  for (const x of strokes) x.relativePct = (100 * x.factor) / maxF;
  const span = strokes.length > 1 ? strokes[strokes.length - 1].timeS - strokes[0].timeS : 0;
  let peakI = 0;
  for (let i = 1; i < n; i++) if (clean[i] > clean[peakI]) peakI = i;
  return {
    trace: makeTrace(rate, [{ name: "A", unit: opts.mvPerAmp ? "V" : "A", values }]),
    truth: {
      strokes,
      tdcTimesS,
      rpm: span > 0 ? (120 * ((strokes.length - 1) / span)) / N : rpm,
      steadyRpm: rpm,
      cylinders: N,
      inrushPeakS: peakI / rate,
    },
  };
}
