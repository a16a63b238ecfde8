/**
 * A second secondary-ignition model, built differently from secondary.ts so the analysis is checked
 * against more than one shape (rise times, collapse times, ringing frequencies, spark-line
 * turbulence, dwell-start wobbles, extinction bumps, baseline offsets, units). Seeded; all truth
 * comes from the parameters and the noise-free model.
 *
 * One firing event, firing side positive (y relative to the baseline):
 * - dwell start at t_on: the primary current starts to flow, and the secondary shows the coil's
 *   charge, M·di/dt with di/dt ∝ e^(−t/τp) (an RL circuit charging): a step of height `chargeV` on
 *   the side opposite the firing line decaying with τp; plus a damped wobble of `wobbleFrac` × the
 *   firing line at `wobbleHz`, first swinging toward the firing side or away from it;
 * - firing line: the breakdown voltage `peakV` reached at t_apex with an asymmetric Gaussian top —
 *   rise width `riseUs`, collapse width `fallUs` (the scope and pickup round the breakdown's corner);
 *   or, with `tip: "breakdown"`, a cusp: the secondary's LC charge V_open·sin(ω(t − t0)), rising a
 *   quarter period in `riseUs` (ω = π/(2·riseUs)) toward the coil's open-circuit voltage V_open =
 *   `reserve` × the breakdown voltage, cut off where it reaches the breakdown voltage (the gap
 *   breaks down; reserve 1: at the rise's top), then collapsing exponentially with τ = `fallUs` into
 *   the spark line (pickup and scope bandwidth). The apex is the breakdown voltage exactly;
 * - spark line: from t_apex on, smoothly (over 3 collapse widths) to level L(t) = `levelV` + slope·
 *   (t − middle of the spark line), plus turbulence: a sum of six sines of random phase between 3 and
 *   60 kHz with total RMS `turbulence` × the level; for `burnMs`;
 * - extinction bump: as the spark goes out the voltage rises by `bumpFrac` × the level over 40 µs;
 * - ringing: the coil's L and C as a damped LC circuit, ω0 = 1/√(LC), ωd = √(ω0² − 1/τ²), from the
 *   voltage at the spark's end with a sine term `ringB` × the level.
 * Output in volts at the scope (×`outScale`, e.g. 1/kvPerVolt for a pickup) or in kV at the plug,
 * plus white noise, a baseline offset and optional inversion or clipping.
 */
import { createRng, type Rng } from "../builders/prng";
import { makeTrace, smoothstep } from "./common";
import type { ParsedTrace } from "../../shared/trace/types";

export interface IgnitionOptions {
  seed?: number;
  sampleRateHz?: number;
  rpm?: number;
  events?: number;
  /** firing line at the plug, kV (default 10) */
  peakKv?: number;
  /** rise and collapse widths of the apex (σ of each Gaussian half), µs (default 8 and 4) */
  riseUs?: number;
  fallUs?: number;
  /** the apex's shape: "rounded" (two Gaussian halves, default) or "breakdown" (a cusp, see above) */
  tip?: "rounded" | "breakdown";
  /** breakdown tip: the coil's open-circuit voltage ÷ the breakdown voltage (≥ 1, default 1) */
  reserve?: number;
  /** the first apex's offset from the sample grid, µs (default 0: on a sample at most rates) */
  apexOffsetUs?: number;
  /** spark line level (kV, default 1.5), slope (kV/ms, default −0.2), duration (ms, default 1.5) */
  levelKv?: number;
  slopeKvPerMs?: number;
  burnMs?: number;
  /** spark-line turbulence RMS as a fraction of the level (default 0.05) */
  turbulence?: number;
  /** dwell ms (default 3; null: the turn-on is not in the capture) */
  dwellMs?: number | null;
  /** coil charge step at turn-on, kV, and its decay (default 0.3 kV, 3 ms) */
  chargeKv?: number;
  chargeTauMs?: number;
  /** dwell-start wobble: fraction of the firing line (default 0.1), frequency, first swing side */
  wobbleFrac?: number;
  wobbleHz?: number;
  wobbleTowardFiring?: boolean;
  /** extinction bump, fraction of the level (default 0.3) */
  bumpFrac?: number;
  /** coil L (H) and C (F) for the ringing (default 15 H, 60 pF), damping τ (default 3 periods) */
  coilH?: number;
  coilF?: number;
  ringTauPeriods?: number;
  /** sine term of the ringing, × the level (default 1.2) */
  ringB?: number;
  /** white noise RMS at the plug, kV (default 0.02) */
  noiseKv?: number;
  /** baseline offset at the plug, kV (default 0) */
  baselineKv?: number;
  polarity?: 1 | -1;
  /** the file's numbers: "kV" at the plug, or "V" at the scope through a pickup of `kvPerVolt` */
  fileUnit?: "kV" | "V" | "mV";
  kvPerVolt?: number;
  /** per-coil scale of every voltage (a pickup's coupling: 0.75 = 25 % lower), default 1 */
  coupling?: number;
  /** clip the recorded file values at these levels (file units) */
  clip?: { high?: number; low?: number };
  /** extra single-sample glitches: time (s) and height at the plug (kV, firing side) */
  glitches?: { timeS: number; kv: number }[];
  /** the events' timing jitter and size jitter (fractions); default 0 */
  jitter?: number;
  /**
   * firings the pickup sees per engine cycle (720°): 1 on one cylinder's coil or lead (default),
   * the cylinder count on a distributor's coil wire (every cylinder fires through it)
   */
  firingsPerCycle?: number;
}

export interface IgnitionEventTruth {
  timeS: number;
  /** firing line above the baseline, kV at the plug (noise-free, before clipping) */
  peakKv: number;
  burnMs: number;
  levelKv: number;
  ringingHz: number;
  dwellMs: number | null;
}

export interface IgnitionTruth {
  events: IgnitionEventTruth[];
  rpm: number | null;
  /** undamped LC frequency 1/(2π√(LC)) */
  lcHz: number;
  /** multiply kV at the plug by this to get file units */
  fileScale: number;
}

interface Model {
  tOn: number | null;
  tApex: number;
  tEnd: number;
  stop: number;
  peak: number;
  level: number;
  slope: number; // kV/s
  sines: { a: number; w: number; ph: number }[];
}

function build(
  o: Required<Omit<IgnitionOptions, "seed" | "clip" | "glitches" | "dwellMs" | "kvPerVolt" | "fileUnit">>,
  rng: Rng,
  tApex: number,
  dwellMs: number | null,
): Model {
  const j = (x: number) => x * (1 + o.jitter * (2 * rng.next() - 1));
  const burn = j(o.burnMs) / 1e3;
  const level = j(o.levelKv);
  const sines = Array.from({ length: 6 }, () => ({
    a: (o.turbulence * level * Math.SQRT2) / Math.sqrt(6),
    w: 2 * Math.PI * rng.range(3e3, 60e3),
    ph: rng.range(0, 2 * Math.PI),
  }));
  return {
    tOn: dwellMs == null ? null : tApex - dwellMs / 1e3,
    tApex,
    tEnd: tApex + burn,
    stop: tApex + burn + 6e-3,
    peak: j(o.peakKv),
    level,
    slope: o.slopeKvPerMs * 1e3,
    sines,
  };
}

/**
 * The breakdown tip (see the module's note): the LC charge's quarter sine up to the breakdown voltage
 * `peak`, reached at dt = 0, then its collapse e^(−dt/τ) (the spark line is added by the caller).
 */
function breakdownTip(peak: number, reserve: number, quarterS: number, tauS: number, dt: number): number {
  const w = Math.PI / (2 * quarterS);
  const vOpen = peak * Math.max(1, reserve);
  const tb = Math.asin(peak / vOpen) / w; // from the rise's start to the breakdown
  if (dt < -tb) return 0;
  if (dt < 0) return vOpen * Math.sin(w * (dt + tb));
  return dt < 40 * tauS ? peak * Math.exp(-dt / tauS) : 0;
}

/** The noise-free event at time t, kV at the plug, firing side positive, coupling not applied. */
function eventKv(
  m: Model,
  o: Required<
    Pick<
      IgnitionOptions,
      | "riseUs"
      | "fallUs"
      | "chargeKv"
      | "chargeTauMs"
      | "wobbleFrac"
      | "wobbleHz"
      | "wobbleTowardFiring"
      | "bumpFrac"
      | "coilH"
      | "coilF"
      | "ringTauPeriods"
      | "ringB"
      | "tip"
      | "reserve"
    >
  >,
  t: number,
): number {
  let y = 0;
  if (m.tOn != null && t >= m.tOn && t < m.tApex) {
    const u = t - m.tOn;
    const fade = 1 - smoothstep((t - (m.tApex - 4 * o.riseUs * 1e-6)) / (4 * o.riseUs * 1e-6));
    y -= o.chargeKv * Math.exp(-u / (o.chargeTauMs * 1e-3)) * fade;
    const side = o.wobbleTowardFiring ? 1 : -1;
    y += side * o.wobbleFrac * m.peak * Math.exp(-u / (2.5 / o.wobbleHz)) * Math.sin(2 * Math.PI * o.wobbleHz * u);
  }
  const sr = o.riseUs * 1e-6;
  const sf = o.fallUs * 1e-6;
  const dt = t - m.tApex;
  const cusp = o.tip === "breakdown";
  if (cusp) y += breakdownTip(m.peak, o.reserve, sr, sf, dt);
  else if (Math.abs(dt) < 12 * Math.max(sr, sf))
    y += m.peak * Math.exp(-(dt * dt) / (2 * (dt < 0 ? sr * sr : sf * sf)));
  if (t >= m.tApex && t < m.tEnd) {
    const onset = cusp ? 1 - Math.exp(-dt / sf) : smoothstep(dt / (3 * sf));
    const mid = (m.tApex + m.tEnd) / 2;
    let turb = 0;
    for (const s of m.sines) turb += s.a * Math.sin(s.w * dt + s.ph);
    const bump = o.bumpFrac * m.level * smoothstep((t - (m.tEnd - 40e-6)) / 40e-6);
    y += (m.level + m.slope * (t - mid) + turb + bump) * onset;
  } else if (t >= m.tEnd && t < m.stop) {
    const w0 = 1 / Math.sqrt(o.coilH * o.coilF);
    const tau = (o.ringTauPeriods * 2 * Math.PI) / w0;
    const wd = Math.sqrt(w0 * w0 - 1 / (tau * tau));
    const mid = (m.tApex + m.tEnd) / 2;
    const vEnd = m.level + m.slope * (m.tEnd - mid) + o.bumpFrac * m.level;
    const u = t - m.tEnd;
    y += Math.exp(-u / tau) * (vEnd * Math.cos(wd * u) + o.ringB * m.level * Math.sin(wd * u));
  }
  return y;
}

export function generateIgnition(opts: IgnitionOptions = {}): { trace: ParsedTrace; truth: IgnitionTruth } {
  const rng = createRng(opts.seed ?? 1);
  const o = {
    sampleRateHz: 1e6,
    rpm: 3000,
    events: 2,
    peakKv: 10,
    riseUs: 8,
    fallUs: 4,
    levelKv: 1.5,
    slopeKvPerMs: -0.2,
    burnMs: 1.5,
    turbulence: 0.05,
    chargeKv: 0.3,
    chargeTauMs: 3,
    wobbleFrac: 0.1,
    wobbleHz: 15e3,
    wobbleTowardFiring: true,
    bumpFrac: 0.3,
    coilH: 15,
    coilF: 60e-12,
    ringTauPeriods: 3,
    ringB: 1.2,
    noiseKv: 0.02,
    baselineKv: 0,
    polarity: 1 as 1 | -1,
    coupling: 1,
    jitter: 0,
    tip: "rounded",
    reserve: 1,
    apexOffsetUs: 0,
    firingsPerCycle: 1,
    ...Object.fromEntries(Object.entries(opts).filter(([, v]) => v !== undefined)),
  } as Required<Omit<IgnitionOptions, "seed" | "clip" | "glitches" | "dwellMs" | "kvPerVolt" | "fileUnit">>;
  const dwellMs = opts.dwellMs === undefined ? 3 : opts.dwellMs;
  const period = 120 / (o.rpm * o.firingsPerCycle);
  const pre = (dwellMs ?? 0) / 1e3 + 0.8e-3 + o.apexOffsetUs * 1e-6;
  const models: Model[] = [];
  for (let k = 0; k < o.events; k++) models.push(build(o, rng, pre + k * period, dwellMs));
  const duration = pre + (o.events - 1) * period + o.burnMs / 1e3 + 4e-3;
  const rate = o.sampleRateHz;
  const n = Math.round(duration * rate);
  const unit = opts.fileUnit ?? "kV";
  const kvPerVolt = opts.kvPerVolt ?? 10;
  const fileScale = unit === "kV" ? 1 : unit === "V" ? 1 / kvPerVolt : 1000 / kvPerVolt;
  const values = new Float32Array(n);
  const glitchAt = new Map((opts.glitches ?? []).map((g) => [Math.round(g.timeS * rate), g.kv]));
  let e = 0;
  for (let i = 0; i < n; i++) {
    const t = i / rate;
    while (e < models.length - 1 && t >= models[e].stop) e++;
    let y = 0;
    for (let k = Math.max(0, e - 1); k < Math.min(models.length, e + 2); k++) {
      const m = models[k];
      if (t < m.stop && t >= (m.tOn ?? m.tApex - 1e-4)) y += eventKv(m, o, t);
    }
    y = y * o.coupling + (glitchAt.get(i) ?? 0);
    let x = (o.baselineKv + o.polarity * y + o.noiseKv * rng.normal()) * fileScale;
    if (opts.clip?.high != null && x > opts.clip.high) x = opts.clip.high;
    if (opts.clip?.low != null && x < opts.clip.low) x = opts.clip.low;
    values[i] = x;
  }
  const w0 = 1 / Math.sqrt(o.coilH * o.coilF);
  const tau = (o.ringTauPeriods * 2 * Math.PI) / w0;
  const events = models.map((m) => {
    // the apex on a fine grid (the spark line's onset adds a little after the Gaussian's top)
    let best = -Infinity;
    let tBest = m.tApex;
    for (let t = m.tApex - 3 * o.riseUs * 1e-6; t < m.tApex + 3 * o.fallUs * 1e-6; t += 1e-9) {
      const y = eventKv(m, o, t);
      if (y > best) {
        best = y;
        tBest = t;
      }
    }
    return {
      timeS: tBest,
      peakKv: best * o.coupling,
      burnMs: (m.tEnd - m.tApex) * 1e3,
      levelKv: m.level * o.coupling,
      ringingHz: Math.sqrt(w0 * w0 - 1 / (tau * tau)) / (2 * Math.PI),
      dwellMs: m.tOn != null ? (m.tApex - m.tOn) * 1e3 : null,
    };
  });
  return {
    trace: makeTrace(rate, [{ name: "A", unit, values }]),
    truth: {
      events,
      rpm:
        events.length >= 2
          ? 120 / (((events[events.length - 1].timeS - events[0].timeS) / (events.length - 1)) * o.firingsPerCycle)
          : null,
      lcHz: w0 / (2 * Math.PI),
      fileScale,
    },
  };
}
