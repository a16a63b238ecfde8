/**
 * Crank sensor generator: a variable-reluctance (VR) sensor over a 60-2 wheel, with known truth.
 *
 * 60 tooth positions 6° apart, two of them missing (the gap is 3 pitches, 18°). Each tooth adds a
 * Gaussian bump of magnetic flux Φ under the sensor; the sensor's voltage follows Faraday's law,
 * v = −N·dΦ/dt = −N·ω·dΦ/dθ, so both its amplitude and its frequency rise with speed. A tooth
 * reaching the sensor gives a positive lobe, leaving it a negative one; the falling zero crossing
 * between them is the tooth's centre. A damaged (chipped) tooth carries less flux.
 */
import type { CaptureSettingsInput } from "../../shared/schemas/capture-settings";
import { createRng } from "../helpers/prng";
import { makeTrace } from "./common";
import type { GeneratedCapture } from "./secondary";

export interface CrankOptions {
  seed?: number;
  /** default 100 kS/s */
  sampleRateHz?: number;
  /** default 1000 */
  rpm?: number;
  /** speed ripple: ω = ω0·(1 + ripple·sin(2π·rippleHz·t)); default 0 */
  ripple?: number;
  rippleHz?: number;
  /** revolutions captured; default 2.5 */
  revolutions?: number;
  /** tooth number (1 = first after the gap, up to 58) of a damaged tooth */
  damagedTooth?: number | null;
  /** its flux as a fraction of a good tooth's; default 0.35 */
  damagedFactor?: number;
  /** peak voltage at 1000 rpm, V; default 2 */
  voltsAt1000?: number;
  /** default 0.01 V */
  noiseV?: number;
  /** −1 swaps the sensor's leads */
  polarity?: 1 | -1;
}

export interface CrankTruth {
  kind: "crank";
  rpm: number;
  /** tooth period at constant speed, s: one revolution is 60 pitches, so T = 60/(60·rpm) */
  toothPeriodS: number;
  teethPerRev: 58;
  gapRatio: 3;
  damagedTooth: number | null;
  /** times the last tooth before each gap passed the sensor */
  gapTimesS: number[];
  /** peak voltage of a good tooth's positive lobe at the start speed (no noise) */
  peakV: number;
}

const PITCH = (6 * Math.PI) / 180;
const SIGMA = (1.6 * Math.PI) / 180; // flux bump width under the sensor

export function generateCrank(opts: CrankOptions = {}): GeneratedCapture<CrankTruth> {
  const rng = createRng(opts.seed ?? 1);
  const rate = opts.sampleRateHz ?? 100e3;
  const rpm = opts.rpm ?? 1000;
  const revs = opts.revolutions ?? 2.5;
  const ripple = opts.ripple ?? 0;
  const rippleHz = opts.rippleHz ?? 10;
  const damaged = opts.damagedTooth ?? null;
  const dFactor = opts.damagedFactor ?? 0.35;
  const noise = opts.noiseV ?? 0.01;
  const pol = opts.polarity ?? 1;
  const omega0 = (rpm * 2 * Math.PI) / 60;
  // dΦ/dθ of one Gaussian tooth peaks at x = −σ with 1/(σ·√e); scale so a good tooth at 1000 rpm gives voltsAt1000
  const kV = (opts.voltsAt1000 ?? 2) / (((1000 * 2 * Math.PI) / 60) * (1 / (SIGMA * Math.sqrt(Math.E))));
  const theta0 = rng.range(0, 2 * Math.PI);
  const duration = (revs * 60) / rpm;
  const n = Math.round(duration * rate);
  const values = new Float32Array(n);
  // tooth i (0..57) at angle i·PITCH; tooth number = i + 1 (1 = first after the gap at 58, 59)
  const amp = (i: number) => (damaged != null && i === damaged - 1 ? dFactor : 1);
  let theta = theta0;
  const gapTimes: number[] = [];
  let prevRel = NaN;
  for (let i = 0; i < n; i++) {
    const t = i / rate;
    const omega = omega0 * (1 + ripple * Math.sin(2 * Math.PI * rippleHz * t));
    const th = theta % (2 * Math.PI);
    // nearest teeth (the bumps are narrow: three neighbours suffice)
    const c = Math.round(th / PITCH);
    let dphi = 0;
    for (let k = c - 2; k <= c + 2; k++) {
      const idx = ((k % 60) + 60) % 60;
      if (idx >= 58) continue;
      const x = th - k * PITCH;
      dphi += amp(idx) * (-x / (SIGMA * SIGMA)) * Math.exp(-(x * x) / (2 * SIGMA * SIGMA));
    }
    values[i] = pol * kV * omega * dphi + noise * rng.normal();
    // the last tooth (index 57, at 342°) passing the sensor: its centre
    const rel = th - 57 * PITCH;
    if (prevRel < 0 && rel >= 0) gapTimes.push(t - rel / omega);
    prevRel = rel;
    theta += omega / rate;
  }
  const trace = makeTrace(rate, [{ name: "A", unit: "V", values }]);
  const settings: CaptureSettingsInput = {
    kind: "crank",
    probe: "direct",
    voltsPerDiv: Math.max(0.5, Math.ceil((kV * omega0 * (1 + ripple) * 1.3) / (SIGMA * Math.sqrt(Math.E)) / 4 * 10) / 10),
    timePerDivS: duration / 10,
    sensor: "crankshaft position (VR)",
  };
  return {
    trace,
    truth: {
      kind: "crank",
      rpm,
      toothPeriodS: 60 / (60 * rpm),
      teethPerRev: 58,
      gapRatio: 3,
      damagedTooth: damaged,
      gapTimesS: gapTimes,
      peakV: (kV * omega0) / (SIGMA * Math.sqrt(Math.E)),
    },
    settings,
  };
}
