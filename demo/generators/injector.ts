/**
 * Saturated (high-impedance) injector voltage generator, measured at the driver side, with truth.
 *
 * Off: the supply voltage. The driver grounds the injector for the pulse width; the current rises
 * as I = (V/R)(1 − e^(−t/τ)), τ = L/R, and the driver's small resistance shows it as a slight rise
 * of the on-voltage. At turn-off the coil's current must keep flowing: V = L·di/dt drives the
 * voltage far above the supply (a fast spike that decays back, or, with a clamping driver, a flat
 * top at the clamp voltage while the energy is dissipated). A small hump on the supply after the
 * spike is the pintle closing; a sticking injector closes late or shows no hump.
 */
import type { CaptureSettingsInput } from "../../shared/schemas/capture-settings";
import { createRng } from "../builders/prng";
import { makeTrace } from "./common";
import type { GeneratedCapture } from "./secondary";

export interface InjectorOptions {
  seed?: number;
  /** default 200 kS/s */
  sampleRateHz?: number;
  /** default 800 (one pulse per 720°: every 150 ms) */
  rpm?: number;
  /** pulses in the capture; default 2 */
  events?: number;
  /** default 3.0 */
  pulseWidthMs?: number;
  /** default 14.0 */
  supplyV?: number;
  /** coil resistance and inductance; default 14 Ω, 5 mH */
  resistanceOhm?: number;
  inductanceH?: number;
  /** unclamped turn-off peak, V; default 72 */
  spikeV?: number;
  /** clamp voltage, V, or null for no clamp; default null */
  clampV?: number | null;
  /** pintle hump: delay after turn-off (ms) and height (V); default 0.7 ms, 1.0 V */
  humpDelayMs?: number;
  humpV?: number;
  /** "late": the hump comes at 1.8 ms; "absent": none */
  sticking?: "none" | "late" | "absent";
  /** default 0.04 V */
  noiseV?: number;
  /** relative pulse-to-pulse variation of the width; default 0.005 */
  jitter?: number;
}

export interface InjectorPulseTruth {
  /** turn-on (driver grounds the injector) */
  timeS: number;
  pulseWidthMs: number;
  turnOffPeak: number;
  clamped: boolean;
  humpDelayMs: number | null;
  humpHeight: number | null;
}

export interface InjectorTruth {
  kind: "injector";
  pulses: InjectorPulseTruth[];
  rpm: number | null;
  supplyV: number;
  clamped: boolean;
  /** the pintle fault put in */
  sticking: "none" | "late" | "absent";
}

export function generateInjector(opts: InjectorOptions = {}): GeneratedCapture<InjectorTruth> {
  const rng = createRng(opts.seed ?? 1);
  const rate = opts.sampleRateHz ?? 200e3;
  const rpm = opts.rpm ?? 800;
  const period = 120 / rpm;
  const count = opts.events ?? 2;
  const pw = (opts.pulseWidthMs ?? 3.0) / 1e3;
  const vs = opts.supplyV ?? 14.0;
  const R = opts.resistanceOhm ?? 14;
  const Lh = opts.inductanceH ?? 5e-3;
  const tau = Lh / R;
  const spikeV = opts.spikeV ?? 72;
  const clampV = opts.clampV ?? null;
  const sticking = opts.sticking ?? "none";
  const humpDelay = (sticking === "late" ? 1.8 : (opts.humpDelayMs ?? 0.7)) / 1e3;
  const humpV = sticking === "absent" ? 0 : (opts.humpV ?? 1.0);
  const noise = opts.noiseV ?? 0.04;
  const jitter = opts.jitter ?? 0.005;
  const rOn = 0.15; // driver on-resistance, Ω

  const pre = 1e-3 + rng.range(0, 0.5e-3);
  const pulses = Array.from({ length: count }, (_, k) => {
    const tOn = pre + k * period * (1 + 0.001 * rng.normal());
    const width = pw * (1 + jitter * (2 * rng.next() - 1));
    const iOff = (vs / R) * (1 - Math.exp(-width / tau));
    // clamped: the current decays linearly through the clamp, t = L·I/(Vclamp − Vsupply)
    const clampTime = clampV != null ? (Lh * iOff) / Math.max(1, clampV - vs) : 0;
    return { tOn, tOff: tOn + width, iOff, clampTime };
  });
  const duration = Math.max(10e-3, pre + (count - 1) * period + pw * 1.1 + 4e-3);
  const n = Math.round(duration * rate);
  const values = new Float32Array(n);
  const EDGE = 2e-6;
  const SPIKE_RISE = 4e-6;
  const SPIKE_TAU = 35e-6;
  const HUMP_SIGMA = 80e-6;
  let e = 0;
  for (let i = 0; i < n; i++) {
    const t = i / rate;
    while (e < pulses.length - 1 && t > pulses[e].tOff + 5e-3) e++;
    const p = pulses[e];
    let v = vs;
    if (!p) {
      // no pulses: the supply only
    } else if (t >= p.tOn && t < p.tOff) {
      const u = t - p.tOn;
      const on = rOn * (vs / R) * (1 - Math.exp(-u / tau));
      v = u < EDGE ? vs + (on - vs) * (u / EDGE) : on;
    } else if (p && t >= p.tOff && t < p.tOff + 6e-3) {
      const u = t - p.tOff;
      const top = clampV ?? spikeV;
      if (u < SPIKE_RISE) v = p.iOff * rOn + (top - p.iOff * rOn) * (u / SPIKE_RISE);
      else if (clampV != null && u < SPIKE_RISE + p.clampTime) v = clampV;
      else {
        const u2 = u - SPIKE_RISE - (clampV != null ? p.clampTime : 0);
        v = vs + (top - vs) * Math.exp(-u2 / SPIKE_TAU);
      }
      if (humpV > 0) v += humpV * Math.exp(-0.5 * ((u - humpDelay) / HUMP_SIGMA) ** 2);
    }
    values[i] = v + noise * rng.normal();
  }
  const truthPulses: InjectorPulseTruth[] = pulses.map((p) => ({
    timeS: p.tOn,
    pulseWidthMs: (p.tOff - p.tOn) * 1e3,
    turnOffPeak:
      (clampV ?? spikeV) + (humpV > 0 ? humpV * Math.exp(-0.5 * ((SPIKE_RISE - humpDelay) / HUMP_SIGMA) ** 2) : 0),
    clamped: clampV != null,
    humpDelayMs: humpV > 0 ? humpDelay * 1e3 : null,
    humpHeight: humpV > 0 ? humpV : null,
  }));
  const settings: CaptureSettingsInput = {
    kind: "injector",
    probe: "direct",
    voltsPerDiv: 20,
    groundOffsetDiv: -3,
    timePerDivS: 1e-3,
    circuit: "injector 1 control",
  };
  return {
    trace: makeTrace(rate, [{ name: "A", unit: "V", values }]),
    truth: {
      kind: "injector",
      pulses: truthPulses,
      rpm: count >= 2 ? 120 / ((truthPulses[count - 1].timeS - truthPulses[0].timeS) / (count - 1)) : null,
      supplyV: vs,
      clamped: clampV != null,
      sticking,
    },
    settings,
  };
}
