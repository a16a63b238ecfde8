import { formatQuantity } from "../trace/units";
import { detectClipping } from "./clip";
import { ENGINE_SAFETY } from "./findings";
import { fmt, fmtRate, fmtTime } from "./format";
import { measurePrepared } from "./measure";
import {
  clippedFinding,
  finishFindings,
  setting,
  triggerBeyondFinding,
  voltsPerDivFor,
  type FindingDraft,
} from "./review";
import { boxcar, niceCeil, roundNice, timeAtFrac, timeAtOf, type Prepared } from "./signal";
import { blockSample, histogramQuantile, metricStats, robustLevelAndNoise } from "./stats";
import type { CaptureSettings } from "../schemas/capture-settings";
import type { Finding, InjectorEvent, InjectorSummary, Measurements, Suggestions } from "./types";

export interface InjectorContext {
  settings: Partial<CaptureSettings>;
  screen: { min: number; max: number } | null;
}

export interface InjectorAnalysis {
  events: InjectorEvent[];
  summary: InjectorSummary;
  findings: Finding[];
  measurements: Measurements;
  suggestions: Suggestions;
}

const MIN_PULSE_S = 0.1e-3;
const SPIKE_SEARCH_S = 1e-3;
const HUMP_SEARCH_S = 3e-3;
const HUMP_SMOOTH_S = 40e-6;
/** a flat top this long at the spike's peak is a clamping driver (common practice, no source) */
const CLAMP_MIN_S = 40e-6;

function medianOf(v: Float32Array, a: number, b: number, lo: number, hi: number, scale: number): number {
  // median of the samples of v[a, b) that lie in [lo, hi] (in scaled units), by a histogram
  const BINS = 2048;
  const counts = new Uint32Array(BINS);
  let n = 0;
  const w = (hi - lo) / BINS;
  for (let i = a; i < b; i++) {
    const x = v[i] * scale;
    if (x < lo || x > hi) continue;
    counts[Math.min(BINS - 1, ((x - lo) / w) | 0)]++;
    n++;
  }
  if (n === 0) return NaN;
  let acc = 0;
  for (let k = 0; k < BINS; k++) {
    acc += counts[k];
    if (acc * 2 >= n) return lo + (k + 0.5) * w;
  }
  return hi;
}

interface Levels {
  /** supply and on levels, noise, in the physical unit */
  supply: number;
  onLevel: number;
  noise: number;
}

/** The turn-off spike after the driver lets go at index q: its peak, and a clamp's flat top. */
function turnOffSpike(p: Prepared, q: number, lv: Levels) {
  const { v, n, rate } = p;
  const sc = p.toPhysical;
  const spikeEnd = Math.min(n, q + Math.ceil(rate * SPIKE_SEARCH_S));
  let pk = q;
  for (let r = q; r < spikeEnd; r++) if (v[r] > v[pk]) pk = r;
  const peak = v[pk] * sc;
  const flatTol = Math.max(0.02 * (peak - lv.supply), 4 * lv.noise);
  let r0 = pk;
  while (r0 > q && v[r0 - 1] * sc >= peak - flatTol) r0--;
  let r1 = pk;
  while (r1 + 1 < spikeEnd && v[r1 + 1] * sc >= peak - flatTol) r1++;
  const flatS = (r1 - r0 + 1) / rate;
  const clamped = flatS >= CLAMP_MIN_S && peak - lv.supply > 10 * lv.noise;
  let clampLevel: number | null = null;
  if (clamped) {
    let acc = 0;
    for (let r = r0; r <= r1; r++) acc += v[r];
    clampLevel = (acc / (r1 - r0 + 1)) * sc;
  }
  // back to the supply after the spike
  let back = r1;
  const backTh = lv.supply + 0.1 * (peak - lv.supply);
  while (back < n && v[back] * sc > backTh) back++;
  return { peak, clamped, clampLevel, back };
}

/** The pintle hump: a local maximum on the supply after the spike, clear of noise; null when none. */
function pintleHump(p: Prepared, lv: Levels, from: number, q: number, tOff: number, peak: number, lowTh: number) {
  const { v, n, rate } = p;
  const sc = p.toPhysical;
  const hs = Math.max(1, Math.round(rate * HUMP_SMOOTH_S) | 1);
  const noiseS = lv.noise / Math.sqrt(hs);
  const a = Math.min(n, from + Math.ceil(rate * 50e-6));
  let b = Math.min(n, q + Math.ceil(rate * HUMP_SEARCH_S));
  // stop before the next pulse
  for (let r = a; r < b; r++)
    if (v[r] < lowTh) {
      b = r;
      break;
    }
  if (b - a <= 3 * hs) return null;
  const ys = boxcar(v, a, b, hs, sc, 0); // physical unit
  let best = -1;
  let bestProm = 0;
  let valley = ys[0];
  for (let r = 1; r < ys.length - 1; r++) {
    if (ys[r] < valley) valley = ys[r];
    if (ys[r] >= ys[r - 1] && ys[r] > ys[r + 1]) {
      // prominence: above the valley before it and the lowest point after it (within 0.5 ms)
      let after = ys[r];
      const stop = Math.min(ys.length, r + Math.ceil(rate * 0.5e-3));
      for (let t = r + 1; t < stop; t++) if (ys[t] < after) after = ys[t];
      const prom = ys[r] - Math.max(valley, after);
      if (prom > bestProm) {
        bestProm = prom;
        best = r;
      }
    }
  }
  const need = Math.max(0.2, 6 * noiseS, 0.01 * (peak - lv.supply));
  if (best < 0 || bestProm < need || ys[best] - lv.supply <= 0.5 * need) return null;
  return { humpDelayMs: (timeAtOf(p, a + best) - tOff) * 1e3, humpHeight: ys[best] - lv.supply };
}

/** Every complete pulse: driver on (mid-level fall) to off (mid-level rise), its spike and hump. */
function findPulses(p: Prepared, lv: Levels): InjectorEvent[] {
  const { v, n } = p;
  const sc = p.toPhysical;
  const events: InjectorEvent[] = [];
  const mid = (lv.supply + lv.onLevel) / 2;
  const h = 0.15 * (lv.supply - lv.onLevel);
  const lowTh = (mid - h) / sc;
  const highTh = (mid + h) / sc;
  const midRaw = mid / sc;
  const crossAt = (i: number) => {
    // mid-level crossing between i-1 and i
    const a = v[i - 1];
    const b = v[i];
    return timeAtFrac(p, i - 1 + (b !== a ? (midRaw - a) / (b - a) : 0));
  };
  let i = 1;
  while (i < n) {
    while (i < n && v[i] >= lowTh) i++;
    if (i >= n) break;
    let k = i;
    while (k > 1 && v[k - 1] < midRaw) k--;
    const tOn = crossAt(k);
    let j = i;
    while (j < n && v[j] <= highTh) j++;
    if (j >= n) break; // the pulse runs off the end
    let q = j;
    while (q > i && v[q - 1] > midRaw) q--;
    const tOff = crossAt(q);
    const width = tOff - tOn;
    if (width < MIN_PULSE_S) {
      i = j + 1;
      continue;
    }
    const spike = turnOffSpike(p, q, lv);
    const hump = pintleHump(p, lv, spike.back, q, tOff, spike.peak, lowTh);
    events.push({
      timeS: tOn,
      pulseWidthMs: width * 1e3,
      turnOffPeak: spike.peak,
      clamped: spike.clamped,
      clampLevel: spike.clampLevel,
      humpDelayMs: hump?.humpDelayMs ?? null,
      humpHeight: hump?.humpHeight ?? null,
    });
    i = Math.max(spike.back, j) + 1;
  }
  return events;
}

/**
 * Saturated injector voltage at the driver side: pulse width (driver on), turn-off spike height,
 * clamp detection, and the pintle-closing hump after the spike.
 */
export function analyzeInjector(p: Prepared, ctx: InjectorContext): InjectorAnalysis {
  const { v, n, rate } = p;
  const sc = p.toPhysical;
  const unit = p.unit;
  const s = ctx.settings;
  const findings: FindingDraft[] = [];
  const measurements = measurePrepared(p, sc);
  const { noise: noiseRaw } = n ? robustLevelAndNoise(v) : { noise: 0 };
  const noise = noiseRaw * sc;

  // supply (off) level: median of the samples near the 95th percentile (the spike excluded);
  // on level: median of the samples below a quarter of it
  const sampled = n ? blockSample(v) : v;
  const p95 = n ? histogramQuantile(sampled, 0.95, p.min, p.max) * sc : 0;
  const supply = medianOf(sampled, 0, sampled.length, 0.5 * p95, 1.2 * p95, sc);
  // the on level from every sample: at a low duty cycle the block sample may hold few of them
  const onLevel = medianOf(v, 0, n, Math.min(p.min * sc, 0), 0.25 * supply, sc);
  const events =
    Number.isFinite(supply) && Number.isFinite(onLevel) && supply - onLevel > 6 * noise
      ? findPulses(p, { supply, onLevel, noise })
      : [];

  let rpm: number | null = null;
  if (events.length >= 2) {
    const gaps = events
      .slice(1)
      .map((e, k) => e.timeS - events[k].timeS)
      .sort((a, b) => a - b);
    const g = gaps.length % 2 ? gaps[gaps.length >> 1] : (gaps[gaps.length / 2 - 1] + gaps[gaps.length / 2]) / 2;
    if (g > 0) rpm = 120 / g;
  }
  const clampedMost = events.length > 0 && events.filter((e) => e.clamped).length * 2 > events.length;
  const summary: InjectorSummary = {
    eventCount: events.length,
    rpm,
    supplyV: Number.isFinite(supply) ? supply : 0,
    pulseWidthMs: metricStats(events.map((e) => e.pulseWidthMs)),
    turnOffPeak: metricStats(events.map((e) => e.turnOffPeak)),
    humpDelayMs: metricStats(events.map((e) => e.humpDelayMs)),
    humpHeight: metricStats(events.map((e) => e.humpHeight)),
    clamped: clampedMost,
  };

  // ---------- review ----------
  if (events.length === 0) {
    findings.push({
      code: "no-events",
      severity: "problem",
      message: "No injector pulses found: the voltage never drops from the supply to the driver's on level.",
      advice:
        "Probe the injector's control (driver) side with the engine running or cranking, and use a time/division long enough to hold a whole pulse (5–10 ms across the screen).",
      caution: true,
    });
  }
  const clipped = clippedFinding(p, detectClipping(p, supply / sc, ctx.screen, noiseRaw), s, "the turn-off spikes");
  if (clipped) findings.push(clipped);
  if (rate < 100e3) {
    findings.push({
      code: "undersampled",
      severity: "warning",
      message: `At ${fmtRate(rate)} the turn-off spike (tens of microseconds) and the pintle hump are read coarsely; the peak voltage may read low.`,
      advice: "Capture at 100 kS/s or faster (common practice, no source).",
      caution: true,
    });
  }
  if (clampedMost) {
    const lvl = metricStats(events.map((e) => e.clampLevel)).median;
    findings.push({
      code: "clamped",
      severity: "info",
      message:
        `The driver clamps the turn-off spike at about ${formatQuantity(lvl ?? 0, unit)}: the spike's ` +
        `height says nothing about the coil here.`,
      advice: "Judge the coil from the current ramp or a resistance test instead of the spike height.",
    });
  }
  if (events.length > 0 && events.every((e) => e.humpDelayMs == null)) {
    findings.push({
      code: "no-pintle-hump",
      severity: "warning",
      message:
        "No pintle-closing hump after the turn-off spike: the injector may be sticking, or the hump is too small " +
        "to see.",
      advice:
        "Compare with the other injectors at the same settings; a hump present on the others but missing here points to this injector. Confirm with a flow or balance test by the maker's procedure.",
      caution: true,
    });
  }
  // the trigger half-way between the supply and the on level, in the scope's unit
  const sugTrigger =
    Number.isFinite(supply) && Number.isFinite(onLevel) && supply > onLevel
      ? roundNice(((supply + onLevel) / 2 / sc) * p.toScope)
      : null;
  const t = triggerBeyondFinding(p, s, sugTrigger);
  if (t) findings.push(t);

  const pwMed = summary.pulseWidthMs.median;
  const peakMax = summary.turnOffPeak.max;
  const vpd = peakMax != null ? voltsPerDivFor((peakMax / sc) * p.toScope, s) : null;
  const tpd = pwMed != null ? niceCeil((pwMed / 1e3 + 3e-3) / 8) : null;
  const suggestions: Suggestions = {
    oneEvent:
      pwMed != null && tpd != null
        ? {
            timePerDivS: tpd,
            voltsPerDiv: vpd,
            reason: `one pulse (${fmt(pwMed, 3)} ms) with the spike and the pintle hump after it (about 3 ms) across 8 of the 10 divisions (common practice, no source)`,
            text: `${fmtTime(tpd)}/div${vpd != null ? `, ${setting(p, vpd, "div")}` : ""}`,
          }
        : null,
    allCylinders: null,
    triggerLevel: sugTrigger,
    triggerText: sugTrigger != null ? setting(p, sugTrigger) : null,
  };
  return { events, summary, findings: finishFindings(findings, ENGINE_SAFETY), measurements, suggestions };
}
