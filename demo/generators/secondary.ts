/**
 * Secondary ignition capture generator (capacitive coil-on-plug pickup), with known truth.
 *
 * One firing event, on the firing line's side of the baseline (y > 0 for positive polarity):
 * - dwell: at the coil's turn-on a small step to the other side of the baseline with a short
 *   ringing, settling to half its height until the firing line;
 * - firing line: a breakdown spike S·u²·e^(2(1−u)), u = (t − t_fire)/8 µs (rounded apex, settles
 *   into the spark line within about 100 µs);
 * - spark line: L0 + slope·(t − middle of the spark line), from the firing line to its end;
 * - coil ringing after the spark line: the coil's inductance L and its capacitance C form a damped
 *   LC circuit, v = e^(−t/τ)·(V_end·cos ωd·t + B·sin ωd·t) with ω0 = 1/√(LC) and
 *   ωd = √(ω0² − 1/τ²): it starts from the spark line's last voltage and first swings further out
 *   (the current that was flowing in the spark now charges the capacitance).
 * Then white noise, optional clipping, optional inversion. All truth is computed from this model
 * with no noise and no clipping.
 */
import type { ParsedTrace } from "../../shared/trace/types";
import type { CaptureSettingsInput } from "../../shared/schemas/capture-settings";
import { createRng } from "../builders/prng";
import { makeTrace, smoothstep } from "./common";

export type SecondaryFault = "none" | "coil-breakdown" | "wide-gap" | "fouled-plug" | "shorted-turns";

export interface SecondaryOptions {
  seed?: number;
  /** samples per second (20 kS/s to 5 MS/s are typical); default 1 MS/s */
  sampleRateHz?: number;
  /** engine speed; default 750 */
  rpm?: number;
  /** firing events in the capture (all complete); default 2, or as many as fit in durationS */
  events?: number;
  /** the capture's length (default: just long enough for the events) */
  durationS?: number;
  /** waste spark: the coil fires every 360° (60/rpm s) instead of every 720° */
  wasteSpark?: boolean;
  /** +1: firing line above the baseline; −1: inverted */
  polarity?: 1 | -1;
  /** firing line height above the baseline at the pickup, V; default 0.8 */
  peakV?: number;
  /** spark line level, V; default 0.15 */
  burnLevelV?: number;
  /** spark duration, ms; default 1.5 */
  burnTimeMs?: number;
  /** spark line slope, V per ms; default −0.01 */
  sparkSlopeVPerMs?: number;
  /** dwell (turn-on to firing line), ms; null: the turn-on is not in the capture. Default 3 */
  dwellMs?: number | null;
  /** turn-on step height, V (the other side of the baseline); default 0.25 × burn level */
  dwellStepV?: number;
  /** coil secondary inductance, H; default 20 */
  coilInductanceH?: number;
  /** coil secondary capacitance (winding, lead, plug), F; default 50 pF */
  coilCapacitanceF?: number;
  /** ringing envelope time constant, s; default from `ringPeaks` */
  ringTauS?: number;
  /** aim for this many ringing peaks of ≥ 20 % of the first (sets ringTauS); default 3 */
  ringPeaks?: number;
  /** sine term of the ringing relative to the burn level; default 1.5 */
  ringAmplitude?: number;
  /** white noise RMS, V; default 0.002 */
  noiseV?: number;
  /** DC offset of the baseline, V; default 0 */
  baselineV?: number;
  /** clip the recorded signal at these levels (absolute, V) */
  clip?: { high?: number; low?: number };
  /** relative event-to-event variation of peak, burn time and level; default 0.03 / 0.015 / 0.02 */
  jitter?: { peak?: number; burn?: number; level?: number };
  fault?: SecondaryFault;
  /** kV at the plug per volt at the pickup (only passed into the suggested settings) */
  kvPerVolt?: number;
}

export interface SecondaryEventTruth {
  /** time of the firing line's apex */
  timeS: number;
  /** firing line height above the baseline, V (noise-free, unclipped) */
  peak: number;
  burnTimeMs: number;
  burnLevel: number;
  sparkSlope: number;
  oscillations: number;
  /** damped ringing frequency ωd/2π */
  ringingHz: number;
  dwellMs: number | null;
  clipped: boolean;
}

export interface SecondaryTruth {
  kind: "secondary-ignition";
  sampleRateHz: number;
  events: SecondaryEventTruth[];
  eventCount: number;
  /** from the event spacing: 120/period (60/period with waste spark); null with < 2 events */
  rpm: number | null;
  polarity: 1 | -1;
  clipped: boolean;
  noiseV: number;
  /** undamped LC frequency 1/(2π√(LC)) */
  lcFrequencyHz: number;
  fault: SecondaryFault;
}

export interface GeneratedCapture<T> {
  trace: ParsedTrace;
  truth: T;
  /** capture settings a tech could have used for this capture */
  settings: CaptureSettingsInput;
}

const TP = 8e-6; // firing line rise to apex
const SPIKE_SPAN = 25 * TP;

interface EventModel {
  tOn: number | null;
  tFire: number;
  tApex: number;
  tEnd: number;
  spike: number;
  level: number;
  slope: number; // V/s
  tMid: number;
  dwellStep: number;
  ringB: number;
  ringTau: number;
  omegaD: number;
  stop: number;
}

function sparkLevelAt(e: EventModel, t: number): number {
  return e.level + e.slope * (t - e.tMid);
}

/** y (firing side positive, relative to the baseline, no noise) of one event at time t. */
function eventY(e: EventModel, t: number): number {
  let y = 0;
  if (e.tOn != null && t >= e.tOn && t < e.tFire + TP) {
    const u = t - e.tOn;
    const d =
      -e.dwellStep * (0.5 + 0.5 * Math.exp(-u / 0.3e-3)) -
      0.6 * e.dwellStep * Math.exp(-u / 80e-6) * Math.cos(2 * Math.PI * 12e3 * u);
    y += t < e.tFire ? d : d * (1 - smoothstep((t - e.tFire) / TP));
  }
  if (t >= e.tFire && t < e.tFire + SPIKE_SPAN) {
    const u = (t - e.tFire) / TP;
    y += e.spike * u * u * Math.exp(2 * (1 - u));
  }
  if (t >= e.tFire && t < e.tEnd) {
    y += sparkLevelAt(e, t) * smoothstep((t - e.tFire) / TP);
  } else if (t >= e.tEnd && t < e.stop) {
    const u = t - e.tEnd;
    const vEnd = sparkLevelAt(e, e.tEnd);
    y += Math.exp(-u / e.ringTau) * (vEnd * Math.cos(e.omegaD * u) + e.ringB * Math.sin(e.omegaD * u));
  }
  return y;
}

/**
 * Ringing peaks by the rule the analysis documents, on the noise-free model sampled finely: the
 * first ringing peak R1 is the highest point after the spark line before the first swing past the
 * baseline by 5 % of R1; no such swing means no ringing (0). After it, each firing-side lobe counts
 * while its peak is at least 20 % of R1 (the first that is not ends the count).
 */
export function ringingPeaksOf(vEnd: number, b: number, tau: number, omegaD: number): number {
  const period = (2 * Math.PI) / omegaD;
  const dt = period / 2000;
  const f = (u: number) => Math.exp(-u / tau) * (vEnd * Math.cos(omegaD * u) + b * Math.sin(omegaD * u));
  let m = -Infinity;
  let u = 0;
  const stop = Math.max(20 * period, 12 * tau);
  for (; u < stop; u += dt) {
    const y = f(u);
    if (y > m) m = y;
    if (y < -0.05 * m) break;
  }
  if (u >= stop || !(m > 0)) return 0;
  const h = 0.05 * m;
  let count = 1;
  let state = -1;
  let lobe = 0;
  for (; u < stop; u += dt) {
    const y = f(u);
    if (state < 0) {
      if (y > h) {
        state = 1;
        lobe = y;
      }
    } else {
      if (y > lobe) lobe = y;
      if (y < -h) {
        if (lobe >= 0.2 * m) {
          count++;
          state = -1;
        } else return count;
      }
    }
  }
  if (state > 0 && lobe >= 0.2 * m) count++;
  return count;
}

export function generateSecondary(opts: SecondaryOptions = {}): GeneratedCapture<SecondaryTruth> {
  const rng = createRng(opts.seed ?? 1);
  const rate = opts.sampleRateHz ?? 1e6;
  const rpm = opts.rpm ?? 750;
  const period = (opts.wasteSpark ? 60 : 120) / rpm;
  const polarity = opts.polarity ?? 1;
  const fault = opts.fault ?? "none";
  const noiseV = opts.noiseV ?? 0.002;
  const baseV = opts.baselineV ?? 0;
  const L = opts.coilInductanceH ?? 20;
  const C = opts.coilCapacitanceF ?? 50e-12;
  const omega0 = 1 / Math.sqrt(L * C);
  const f0 = omega0 / (2 * Math.PI);
  const ringPeaks = opts.ringPeaks ?? 3;
  // k-th peak ≈ e^(−(k−1)T/τ) of the first: aim the 20 % limit half-way between peaks
  let ringTau = opts.ringTauS ?? (ringPeaks - 0.5) / (f0 * Math.log(5));
  const jitter = { peak: 0.03, burn: 0.015, level: 0.02, ...opts.jitter };

  // this coil's own small differences from its neighbours
  let peakV = (opts.peakV ?? 0.8) * rng.range(0.96, 1.04);
  let burnMs = (opts.burnTimeMs ?? 1.5) * rng.range(0.97, 1.03);
  let levelV = (opts.burnLevelV ?? 0.15) * rng.range(0.97, 1.03);
  let erratic = 0;
  switch (fault) {
    case "coil-breakdown":
      peakV *= 0.6;
      burnMs *= 0.55;
      levelV *= 0.9;
      erratic = 0.25;
      break;
    case "wide-gap":
      peakV *= 1.5;
      burnMs *= 0.6;
      levelV *= 1.25;
      break;
    case "fouled-plug":
      peakV *= 0.55;
      burnMs *= 1.45;
      levelV *= 0.75;
      break;
    case "shorted-turns":
      peakV *= 0.85;
      burnMs *= 0.85;
      ringTau = opts.ringTauS ?? 0.1 / f0; // ringing dies within a period
      break;
  }
  if (ringTau * omega0 <= 1.05) ringTau = 1.05 / omega0;
  const omegaD = Math.sqrt(omega0 * omega0 - 1 / (ringTau * ringTau));
  const slope = (opts.sparkSlopeVPerMs ?? -0.01) * 1e3;
  const dwellMs = opts.dwellMs === undefined ? 3 : opts.dwellMs;
  const dwellStep = opts.dwellStepV ?? 0.25 * levelV;
  const ringAmp = opts.ringAmplitude ?? 1.5;
  const ringSpan = Math.min(Math.max(12 * ringTau, 4 / f0), 6e-3);

  const pre = (dwellMs ?? 0) / 1e3 + 0.6e-3 + rng.range(0, 0.4e-3);
  const eventSpan = TP + (burnMs * 1.3) / 1e3 + ringSpan;
  let count: number;
  let duration: number;
  if (opts.durationS != null) {
    duration = opts.durationS;
    count = opts.events ?? Math.max(0, Math.floor((duration - pre - eventSpan - 0.5e-3) / period) + 1);
  } else {
    count = opts.events ?? 2;
    duration = pre + (count - 1) * period + eventSpan + 0.8e-3;
  }

  const models: EventModel[] = [];
  for (let k = 0; k < count; k++) {
    const tFire = pre + k * period * (1 + 0.001 * rng.normal());
    const pk = peakV * (1 + jitter.peak * (2 * rng.next() - 1)) * (erratic ? 1 + erratic * (2 * rng.next() - 1) : 1);
    const burn = (burnMs / 1e3) * (1 + jitter.burn * (2 * rng.next() - 1));
    const level = levelV * (1 + jitter.level * (2 * rng.next() - 1));
    const tApex = tFire + TP;
    const tEnd = tApex + burn;
    const m: EventModel = {
      tOn: dwellMs != null ? tFire - dwellMs / 1e3 : null,
      tFire,
      tApex,
      tEnd,
      spike: 0,
      level,
      slope,
      tMid: (tApex + tEnd) / 2,
      dwellStep,
      ringB: ringAmp * level,
      ringTau,
      omegaD,
      stop: tEnd + ringSpan,
    };
    // spike amplitude so that the apex sits at the wanted height above the baseline
    m.spike = pk - sparkLevelAt(m, tApex);
    models.push(m);
  }

  const n = Math.max(2, Math.round(duration * rate));
  const values = new Float32Array(n);
  const hi = opts.clip?.high ?? Infinity;
  const lo = opts.clip?.low ?? -Infinity;
  let clippedAny = false;
  let e = 0;
  for (let i = 0; i < n; i++) {
    const t = i / rate;
    while (e < models.length - 1 && t >= models[e].stop) e++;
    let y = 0;
    for (let k = e; k < Math.min(models.length, e + 2); k++) {
      const m = models[k];
      if (t < m.stop && (m.tOn == null ? t >= m.tFire : t >= m.tOn)) y += eventY(m, t);
    }
    let x = baseV + polarity * y + noiseV * rng.normal();
    if (x > hi) {
      x = hi;
      clippedAny = true;
    } else if (x < lo) {
      x = lo;
      clippedAny = true;
    }
    values[i] = x;
  }

  const events: SecondaryEventTruth[] = models.map((m) => {
    // apex numerically on a fine grid
    let best = 0;
    let tBest = m.tApex;
    for (let t = m.tFire; t < m.tFire + 5 * TP; t += TP / 400) {
      const y = eventY(m, t);
      if (y > best) {
        best = y;
        tBest = t;
      }
    }
    const vEnd = sparkLevelAt(m, m.tEnd);
    const peakAbs = baseV + polarity * best;
    return {
      timeS: tBest,
      peak: best,
      burnTimeMs: (m.tEnd - m.tApex) * 1e3,
      burnLevel: m.level,
      sparkSlope: m.slope / 1e3,
      oscillations: ringingPeaksOf(vEnd, m.ringB, m.ringTau, m.omegaD),
      ringingHz: m.omegaD / (2 * Math.PI),
      dwellMs: m.tOn != null ? (m.tApex - m.tOn) * 1e3 : null,
      clipped: peakAbs > hi || peakAbs < lo,
    };
  });
  let truthRpm: number | null = null;
  if (events.length >= 2) {
    const span = events[events.length - 1].timeS - events[0].timeS;
    truthRpm = (opts.wasteSpark ? 60 : 120) / (span / (events.length - 1));
  }

  const trace = makeTrace(rate, [{ name: "A", unit: "V", values }]);
  const maxAbs = Math.max(Math.abs(trace.channels[0].max - baseV), Math.abs(trace.channels[0].min - baseV));
  // the screen: ground in the middle, 4 divisions each side; a clipped capture's ceiling is the screen edge
  const voltsPerDiv =
    opts.clip?.high != null || opts.clip?.low != null
      ? Math.max(Math.abs((opts.clip.high ?? 0) - baseV), Math.abs((opts.clip.low ?? 0) - baseV)) / 4
      : niceUp((maxAbs * 1.25) / 4);
  return {
    trace,
    truth: {
      kind: "secondary-ignition",
      sampleRateHz: rate,
      events,
      eventCount: events.length,
      rpm: truthRpm,
      polarity,
      clipped: clippedAny,
      noiseV,
      lcFrequencyHz: f0,
      fault,
    },
    settings: {
      kind: "secondary-ignition",
      probe: "capacitive-secondary",
      kvPerVolt: opts.kvPerVolt,
      voltsPerDiv,
      timePerDivS: niceUp(duration / 10),
      wasteSpark: opts.wasteSpark ?? false,
    },
  };
}

/** next 1-2-5 value at or above x */
export function niceUp(x: number): number {
  const e = Math.floor(Math.log10(x));
  for (const m of [1, 2, 5, 10]) if (m * 10 ** e >= x * (1 - 1e-9)) return Number((m * 10 ** e).toPrecision(3));
  return 10 ** (e + 1);
}
