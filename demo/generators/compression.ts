/**
 * Starter-current capture generator for relative compression, with known truth.
 *
 * Key-on at `startS`: the inrush spike (the motor at standstill draws far more) decays (τ =
 * `inrushTauS`, default 30 ms: the motor's spin-up time) to the cranking current; from within one stroke period of key-on, one current hump per
 * compression stroke:
 * I = base + h_k·cos²(π(t − t_k)/P) for |t − t_k| < P/2, with P = 120/(rpm·N) (one compression
 * stroke per cylinder every 720°). A low-compression cylinder's humps are lower. Optionally the
 * commutator's ripple: `commutatorA`·sin(2π·f·t) while cranking, f = bars × gear ratio × rpm/60 (a
 * 12-bar armature turning about 10 times the crank through the pinion: common practice, no source).
 * Clamp output in volts when mvPerAmp is given, else amperes.
 */
import type { CaptureSettingsInput } from "../../shared/schemas/capture-settings";
import { createRng } from "../builders/prng";
import { makeTrace } from "./common";
import type { GeneratedCapture } from "./secondary";

export interface CompressionOptions {
  seed?: number;
  /** default 5 kS/s */
  sampleRateHz?: number;
  /** default 4 */
  cylinders?: number;
  /** default 200 */
  crankingRpm?: number;
  /** default 1.6 s */
  durationS?: number;
  /** position in the firing sequence (1..N, counted from the first stroke) of a weak cylinder */
  lowPosition?: number | null;
  /** its humps as a fraction of a healthy one's; default 0.7 */
  lowFactor?: number;
  /** cranking current between strokes, A; default 150 */
  baseA?: number;
  /** a healthy stroke's rise above the base, A; default 80 */
  strokeA?: number;
  /** the inrush spike; default true */
  inrush?: boolean;
  /** inrush peak, A; default 550 */
  inrushA?: number;
  /** the inrush's decay time constant, s; default 0.03 */
  inrushTauS?: number;
  /** the first stroke's delay after key-on as a fraction of the stroke period; default random 0.5–1 */
  firstStroke?: number;
  /** the commutator's ripple amplitude, A (default 0), at 12 bars × 10 × rpm/60 */
  commutatorA?: number;
  /** key-on time, s; default 0.1 */
  startS?: number;
  /** white noise RMS, A; default 2 */
  noiseA?: number;
  /** clamp scale: output volts at mvPerAmp mV per ampere; default none (amperes) */
  mvPerAmp?: number;
  /** relative stroke-to-stroke variation; default 0.02 */
  jitter?: number;
}

export interface CompressionStrokeTruth {
  timeS: number;
  /** position 1..N in the firing sequence, counted from the first stroke after key-on */
  position: number;
  /** rise above the base, A */
  peak: number;
  /** % of the highest stroke */
  relativePct: number;
  low: boolean;
  /** what is left of the inrush above the base at the stroke's time, A */
  inrushLeftA: number;
}

export interface CompressionTruth {
  kind: "relative-compression";
  strokes: CompressionStrokeTruth[];
  cylinders: number;
  /** 120·f_peaks/N */
  rpm: number;
  strokePeriodS: number;
  lowPosition: number | null;
  inrushTimeS: number | null;
}

export function generateCompression(opts: CompressionOptions = {}): GeneratedCapture<CompressionTruth> {
  const rng = createRng(opts.seed ?? 1);
  const rate = opts.sampleRateHz ?? 5000;
  const N = opts.cylinders ?? 4;
  const rpm = opts.crankingRpm ?? 200;
  const duration = opts.durationS ?? 1.6;
  const P = 120 / (rpm * N);
  const base = opts.baseA ?? 150;
  const strokeA = opts.strokeA ?? 80;
  const lowPos = opts.lowPosition ?? null;
  const lowFactor = opts.lowFactor ?? 0.7;
  const tStart = opts.startS ?? 0.1;
  const inrush = opts.inrush ?? true;
  const inrushA = opts.inrushA ?? 550;
  const tau = opts.inrushTauS ?? 0.03;
  const inrushLeft = (t: number) =>
    inrush && t >= tStart ? (inrushA - base) * Math.exp(-Math.max(0, t - tStart - 2e-3) / tau) : 0;
  const noise = opts.noiseA ?? 2;
  const jitter = opts.jitter ?? 0.02;
  // the first compression stroke comes within one stroke period of key-on; cranking lasts to the
  // end of the capture (the last stroke may be cut off)
  const t1 = tStart + P * (opts.firstStroke ?? rng.range(0.5, 1));

  const strokes: { t: number; h: number; position: number }[] = [];
  for (let k = 0; ; k++) {
    const t = t1 + k * P;
    if (t - P / 2 >= duration) break;
    const position = (k % N) + 1;
    const h = strokeA * (position === lowPos ? lowFactor : 1) * (1 + jitter * (2 * rng.next() - 1));
    strokes.push({ t, h, position });
  }
  const n = Math.round(duration * rate);
  const values = new Float32Array(n);
  const toOut = opts.mvPerAmp ? opts.mvPerAmp / 1000 : 1;
  let s = 0;
  for (let i = 0; i < n; i++) {
    const t = i / rate;
    let I = 0;
    if (t >= tStart) {
      const u = t - tStart;
      // the current rises within 2 ms to the inrush peak, which decays (τ) to the base
      const rise = Math.min(1, u / 2e-3);
      I = rise * (base + inrushLeft(t));
      if (opts.commutatorA) I += opts.commutatorA * Math.sin((2 * Math.PI * 12 * 10 * rpm * u) / 60);
      while (s < strokes.length - 1 && t > strokes[s].t + P / 2) s++;
      for (let k = Math.max(0, s - 1); k < Math.min(strokes.length, s + 2); k++) {
        const x = (t - strokes[k].t) / P;
        if (Math.abs(x) < 0.5) I += strokes[k].h * Math.cos(Math.PI * x) ** 2;
      }
    }
    values[i] = (I + noise * rng.normal()) * toOut;
  }
  const hMax = Math.max(...strokes.filter((x) => x.t + P / 2 <= duration).map((x) => x.h));
  const truth: CompressionTruth = {
    kind: "relative-compression",
    strokes: strokes.map((x) => ({
      timeS: x.t,
      position: x.position,
      peak: x.h,
      relativePct: (100 * x.h) / hMax,
      low: x.position === lowPos,
      inrushLeftA: inrushLeft(x.t),
    })),
    cylinders: N,
    rpm,
    strokePeriodS: P,
    lowPosition: lowPos,
    inrushTimeS: inrush ? tStart + 2e-3 : null,
  };
  const settings: CaptureSettingsInput = {
    kind: "relative-compression",
    probe: "current-clamp",
    mvPerAmp: opts.mvPerAmp,
    voltsPerDiv: opts.mvPerAmp ? (100 * opts.mvPerAmp) / 1000 : 100,
    groundOffsetDiv: -3,
    timePerDivS: 0.2,
    cylinders: N,
  };
  return {
    trace: makeTrace(rate, [{ name: "A", unit: opts.mvPerAmp ? "V" : "A", values }]),
    truth,
    settings,
  };
}
