/**
 * Secondary ignition with a realistic spark line, a third model built from the physics of the
 * discharge (independent of secondary.ts and ignition.ts), for the spark line's slope, level and
 * burn time. Values in kV at the plug; time from the capture's start.
 *
 * For each firing, with t_ap the apex and t_e = t_ap + burn the end of the spark line:
 * - firing line: a raised cosine from the baseline to FL, 10–90 % rise `riseUs` (default 2 µs; a
 *   raised cosine over T has its 10–90 % rise in 0.5903·T);
 * - collapse into the spark line: v = S(t) + (FL − S(t_ap))·exp(−(t − t_ap)/`collapseUs`) (default 2 µs);
 * - spark line S(t) = Vs0 + (Vs1 − Vs0)·(t − t_ap)/burn + turbulence, the turbulence being Gaussian
 *   noise low-passed by a moving average of `turbulenceUs` (default 20 µs) and rescaled to an RMS of
 *   `turbulenceFrac` (default 5 %) of the mean spark level (Vs0 + Vs1)/2; the burn time runs from the
 *   apex to the end of the spark line;
 * - after it, the coil's damped ringing A_r·exp(−t'/τ)·cos(2π·f_r·t') (t' = t − t_e), τ set so that
 *   `ringPeaks` lobes stand above 20 % of the first, joined to the spark line's last voltage by
 *   (Vs1 − A_r)·exp(−t'/`joinUs`) (default 0.7 µs), so the trace is continuous at t_e;
 * - optionally a dwell-start wobble `dwellMs` before the apex: `wobbleFrac`·FL·exp(−t/τw)·sin(2π·f_w·t)
 *   (default 8 kHz, τw 0.15 ms);
 * - white noise of RMS `noiseKv` (default 0.05 kV) over the whole trace, a baseline offset, polarity.
 * Truth comes from the parameters: slope = (Vs1 − Vs0)/burn, level = (Vs0 + Vs1)/2, burn time, FL.
 */
import { createRng, type Rng } from "../helpers/prng";
import { makeTrace } from "../../demo/generators/common";
import type { ParsedTrace } from "../../shared/trace/types";

export interface SparkLineOptions {
  seed?: number;
  /** samples per second; default 2 MS/s */
  sampleRateHz?: number;
  /** firing events in the capture; default 3 */
  events?: number;
  /** engine speed (one firing per 720°, 120/rpm s apart); default 1500 */
  rpm?: number;
  /** firing line, kV above the baseline; default 12 */
  firingKv?: number;
  /** spark line at its start (Vs0) and at its end (Vs1), kV; default 1.4 → 1.65 */
  sparkStartKv?: number;
  sparkEndKv?: number;
  /** burn time, apex to the end of the spark line, ms; default 1.5 */
  burnMs?: number;
  /** turbulence RMS as a fraction of the mean spark level (default 0.05) and its smoothing (µs, default 20) */
  turbulenceFrac?: number;
  turbulenceUs?: number;
  riseUs?: number;
  collapseUs?: number;
  joinUs?: number;
  /** ringing amplitude A_r (kV, default 2), frequency (Hz, default 4 kHz) and visible lobes (default 4) */
  ringKv?: number;
  ringHz?: number;
  ringPeaks?: number;
  /** dwell-start wobble: fraction of FL (default 0: none), frequency (default 8 kHz), ms before the apex */
  wobbleFrac?: number;
  wobbleHz?: number;
  dwellMs?: number;
  /** white noise RMS, kV; default 0.05 */
  noiseKv?: number;
  baselineKv?: number;
  polarity?: 1 | -1;
}

export interface SparkLineEventTruth {
  timeS: number;
  firingKv: number;
  burnMs: number;
  /** mean spark level (Vs0 + Vs1)/2, kV */
  levelKv: number;
  /** (Vs1 − Vs0)/burn, kV/ms (positive: away from the baseline) */
  slopeKvPerMs: number;
}

export interface SparkLineTruth {
  events: SparkLineEventTruth[];
  rpm: number;
}

const RAISED_COSINE_10_90 = 0.5903; // (acos(−0.8) − acos(0.8))/π: 10–90 % of a raised cosine over T

/** Gaussian noise low-passed by a moving average of w samples, rescaled to RMS `rms` (mean removed). */
function turbulence(rng: Rng, n: number, w: number, rms: number): Float64Array {
  const white = Array.from({ length: n + w }, () => rng.normal());
  const out = new Float64Array(n);
  let acc = 0;
  for (let k = 0; k < w; k++) acc += white[k];
  for (let k = 0; k < n; k++) {
    out[k] = acc / w;
    acc += white[k + w] - white[k];
  }
  let mean = 0;
  for (const x of out) mean += x / n;
  let ss = 0;
  for (const x of out) ss += (x - mean) ** 2;
  const scale = n > 1 && ss > 0 ? rms / Math.sqrt(ss / n) : 0;
  for (let k = 0; k < n; k++) out[k] = (out[k] - mean) * scale;
  return out;
}

export function generateSparkLine(opts: SparkLineOptions = {}): { trace: ParsedTrace; truth: SparkLineTruth } {
  const o = {
    seed: 1,
    sampleRateHz: 2e6,
    events: 3,
    rpm: 1500,
    firingKv: 12,
    sparkStartKv: 1.4,
    sparkEndKv: 1.65,
    burnMs: 1.5,
    turbulenceFrac: 0.05,
    turbulenceUs: 20,
    riseUs: 2,
    collapseUs: 2,
    joinUs: 0.7,
    ringKv: 2,
    ringHz: 4e3,
    ringPeaks: 4,
    wobbleFrac: 0,
    wobbleHz: 8e3,
    dwellMs: 3,
    noiseKv: 0.05,
    baselineKv: 0,
    polarity: 1 as 1 | -1,
    ...opts,
  };
  const rng = createRng(o.seed);
  const rate = o.sampleRateHz;
  const period = 120 / o.rpm;
  const lead = Math.max(o.wobbleFrac > 0 ? o.dwellMs / 1e3 + 1e-3 : 0, 2e-3);
  const n = Math.ceil(rate * (lead + o.events * period));
  const y = new Float64Array(n);
  const burn = o.burnMs / 1e3;
  const vs0 = o.sparkStartKv;
  const vs1 = o.sparkEndKv;
  const mean = (vs0 + vs1) / 2;
  const riseT = (o.riseUs * 1e-6) / RAISED_COSINE_10_90;
  const tauC = o.collapseUs * 1e-6;
  const tauJ = o.joinUs * 1e-6;
  // the k-th lobe of the ringing (k = 0, 1, …) stands at exp(−k/(2·f·τ)) of the first: lobe ringPeaks − 1 at 20 %
  const tauR = (o.ringPeaks - 0.5) / (2 * o.ringHz * Math.log(5));
  const tauW = 0.15e-3;
  const events: SparkLineEventTruth[] = [];
  for (let e = 0; e < o.events; e++) {
    const tAp = lead + e * period + rng.range(0, 0.2e-3);
    const tEnd = tAp + burn;
    const i0 = Math.max(0, Math.floor((tAp - riseT) * rate));
    const iAp = Math.ceil(tAp * rate);
    const iEnd = Math.ceil(tEnd * rate);
    const iStop = Math.min(n, Math.ceil((tEnd + 12 * tauR + 50 * tauJ) * rate));
    const turbW = Math.max(1, Math.round(rate * o.turbulenceUs * 1e-6));
    const turb = turbulence(rng, Math.max(0, iEnd - iAp), turbW, o.turbulenceFrac * mean);
    const sAp = vs0 + turb[0];
    for (let i = i0; i < iStop; i++) {
      const t = i / rate;
      if (i < iAp) y[i] += o.firingKv * 0.5 * (1 - Math.cos((Math.PI * (t - (tAp - riseT))) / riseT));
      else if (i < iEnd) {
        const s = vs0 + ((vs1 - vs0) * (t - tAp)) / burn + turb[i - iAp];
        y[i] += s + (o.firingKv - sAp) * Math.exp(-(t - tAp) / tauC);
      } else {
        const tr = t - tEnd;
        const ring = o.ringKv * Math.exp(-tr / tauR) * Math.cos(2 * Math.PI * o.ringHz * tr);
        y[i] += ring + (vs1 - o.ringKv) * Math.exp(-tr / tauJ);
      }
    }
    if (o.wobbleFrac > 0) {
      const tOn = tAp - o.dwellMs / 1e3;
      const w1 = Math.min(n, Math.ceil((tOn + 10 * tauW) * rate));
      for (let i = Math.max(0, Math.ceil(tOn * rate)); i < w1; i++) {
        const t = i / rate - tOn;
        y[i] += o.wobbleFrac * o.firingKv * Math.exp(-t / tauW) * Math.sin(2 * Math.PI * o.wobbleHz * t);
      }
    }
    events.push({
      timeS: tAp,
      firingKv: o.firingKv,
      burnMs: o.burnMs,
      levelKv: mean,
      slopeKvPerMs: (vs1 - vs0) / o.burnMs,
    });
  }
  const values = new Float32Array(n);
  for (let i = 0; i < n; i++) values[i] = o.baselineKv + o.polarity * y[i] + o.noiseKv * rng.normal();
  return {
    trace: makeTrace(rate, [{ name: "secondary", unit: "kV", values }]),
    truth: { events, rpm: o.rpm },
  };
}
