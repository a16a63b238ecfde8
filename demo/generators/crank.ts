/**
 * Crank sensor generator: a variable-reluctance (VR) or Hall sensor over a missing-tooth wheel, with
 * known truth.
 *
 * N tooth positions 360°/N apart (default 60), k of them missing (default 2: the gap is k + 1
 * pitches, 18° on a 60-2 wheel), or any set of missing positions (`missingAt`, for wheels with
 * several gaps). Each tooth adds a Gaussian bump of magnetic flux Φ under the sensor (width
 * proportional to the pitch); a VR sensor's voltage follows Faraday's law, v = −N·dΦ/dt =
 * −N·ω·dΦ/dθ, so both its amplitude and its frequency rise with speed. A tooth reaching the sensor
 * gives a positive lobe, leaving it a negative one; the falling zero crossing between them is the
 * tooth's centre. A Hall sensor switches between two levels (0 and `hallV`) while a tooth is under it
 * (the flux above half its peak, or, with `hallDuty`, while the sensor faces the tooth's share of the
 * pitch — 0.5: teeth and slots equally wide), with a first-order edge of `hallEdgeUs` (default 5 µs;
 * 0: the output switches within one sample, as a push-pull output does); its amplitude does not
 * change with speed.
 * A damaged (chipped) tooth carries less flux.
 */
import type { CaptureSettingsInput } from "../../shared/schemas/capture-settings";
import { createRng } from "../builders/prng";
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
  /** tooth positions per revolution (default 60) and teeth missing at the gap (default 2) */
  positions?: number;
  missing?: number;
  /** the missing positions (0-based) when not the last `missing` ones: several gaps */
  missingAt?: number[];
  /** "vr" (default) or "hall" (0/`hallV` square wave, high while a tooth is under the sensor) */
  sensor?: "vr" | "hall";
  hallV?: number;
  /** Hall: the share of each pitch the tooth holds the output high (default: from the flux) */
  hallDuty?: number;
  /** Hall: the edge's time constant, µs (default 5; 0: within one sample) */
  hallEdgeUs?: number;
}

export interface CrankTruth {
  kind: "crank";
  rpm: number;
  /** tooth period at constant speed, s: one revolution is N pitches, so T = 60/(N·rpm) */
  toothPeriodS: number;
  positions: number;
  missing: number;
  teethPerRev: number;
  /** pitches the gap spans (k + 1) */
  gapRatio: number;
  damagedTooth: number | null;
  /** times the last tooth before each gap passed the sensor */
  gapTimesS: number[];
  /** peak voltage of a good tooth's positive lobe at the start speed (no noise) */
  peakV: number;
}

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
  const N = opts.positions ?? 60;
  const kMissing = opts.missing ?? 2;
  const PITCH = (2 * Math.PI) / N;
  const SIGMA = PITCH * (1.6 / 6); // flux bump width under the sensor (1.6° on a 60-tooth wheel)
  const missingSet = new Set(opts.missingAt ?? Array.from({ length: kMissing }, (_, i) => N - kMissing + i));
  const present = Array.from({ length: N }, (_, i) => i).filter((i) => !missingSet.has(i));
  const lastBeforeGap = present.filter((i) => missingSet.has((i + 1) % N));
  const hall = opts.sensor === "hall";
  const hallV = opts.hallV ?? 5;
  const omega0 = (rpm * 2 * Math.PI) / 60;
  // dΦ/dθ of one Gaussian tooth peaks at x = −σ with 1/(σ·√e); scale so a good tooth at 1000 rpm gives voltsAt1000
  const kV = (opts.voltsAt1000 ?? 2) / (((1000 * 2 * Math.PI) / 60) * (1 / (SIGMA * Math.sqrt(Math.E))));
  const theta0 = rng.range(0, 2 * Math.PI);
  const duration = (revs * 60) / rpm;
  const n = Math.round(duration * rate);
  const values = new Float32Array(n);
  // tooth i at angle i·PITCH; tooth number = i + 1 (1 = first after the gap at the last positions)
  const amp = (i: number) => (damaged != null && i === damaged - 1 ? dFactor : 1);
  let theta = theta0;
  const gapTimes: number[] = [];
  let hallState: number;
  // first-order edges: each sample closes 1/hallEdge of the way (1: switches within a sample)
  const hallEdge = Math.max(1, Math.round(rate * (opts.hallEdgeUs ?? 5) * 1e-6));
  const duty = opts.hallDuty;
  let hallLevel = 0;
  for (let i = 0; i < n; i++) {
    const t = i / rate;
    const omega = omega0 * (1 + ripple * Math.sin(2 * Math.PI * rippleHz * t));
    const th = theta % (2 * Math.PI);
    // nearest teeth (the bumps are narrow: a few neighbours suffice)
    const c = Math.round(th / PITCH);
    let dphi = 0;
    let phi = 0;
    for (let k = c - 2; k <= c + 2; k++) {
      const idx = ((k % N) + N) % N;
      if (missingSet.has(idx)) continue;
      const x = th - k * PITCH;
      const g = amp(idx) * Math.exp(-(x * x) / (2 * SIGMA * SIGMA));
      dphi += (-x / (SIGMA * SIGMA)) * g;
      phi += g;
    }
    if (hall) {
      if (duty == null) hallState = phi > 0.5 ? 1 : 0;
      else {
        // the tooth's share of the pitch centred on its position
        const idx = ((c % N) + N) % N;
        hallState = !missingSet.has(idx) && Math.abs(th - c * PITCH) < (duty * PITCH) / 2 ? 1 : 0;
      }
      hallLevel += (hallState - hallLevel) / hallEdge;
      values[i] = (pol > 0 ? hallLevel : 1 - hallLevel) * hallV + noise * rng.normal();
    } else values[i] = pol * kV * omega * dphi + noise * rng.normal();
    // the last tooth before each gap passing the sensor: its centre
    for (const last of lastBeforeGap) {
      const rel = th - last * PITCH;
      const prevRel = th - omega / rate - last * PITCH;
      if (prevRel < 0 && rel >= 0) gapTimes.push(t - rel / omega);
    }
    theta += omega / rate;
  }
  const trace = makeTrace(rate, [{ name: "A", unit: "V", values }]);
  const settings: CaptureSettingsInput = {
    kind: "crank",
    probe: "direct",
    voltsPerDiv: Math.max(
      0.5,
      Math.ceil(((kV * omega0 * (1 + ripple) * 1.3) / (SIGMA * Math.sqrt(Math.E)) / 4) * 10) / 10,
    ),
    timePerDivS: duration / 10,
    sensor: "crankshaft position (VR)",
  };
  return {
    trace,
    truth: {
      kind: "crank",
      rpm,
      toothPeriodS: 60 / (N * rpm),
      positions: N,
      missing: kMissing,
      teethPerRev: present.length,
      gapRatio: kMissing + 1,
      damagedTooth: damaged,
      gapTimesS: gapTimes,
      peakV: (kV * omega0) / (SIGMA * Math.sqrt(Math.E)),
    },
    settings,
  };
}
