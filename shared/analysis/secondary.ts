import { boxcar, detectClipping, niceCeil, roundNice, timeAtFrac, timeAtOf, type Prepared } from "./signal";
import { fastMedian, metricStats, modifiedZScores, robustLevelAndNoise } from "./stats";
import { withSafety } from "./findings";
import { fmt, fmtRate, fmtTime } from "./format";
import type { CaptureSettings } from "../schemas/capture-settings";
import type { Finding, SecondaryEvent, SecondarySummary, Suggestions } from "./types";

export interface SecondaryContext {
  /** raw sample value → reported unit (volts at the pickup, or kV with a kV-per-volt scale) */
  scale: number;
  unit: string;
  settings: Partial<CaptureSettings>;
  wasteSpark: boolean;
  /** screen range in raw units, when volts/division is known */
  screen: { min: number; max: number } | null;
}

export interface SecondaryAnalysis {
  events: SecondaryEvent[];
  summary: SecondarySummary;
  findings: Finding[];
  suggestions: Suggestions;
}

// Time constants of the detector (seconds). The firing line rises in microseconds and falls to the
// spark line within tens of microseconds; the spark line lasts about 0.5–3 ms; the ringing a few
// periods of 3–15 kHz.
const SMOOTH_S = 10e-6; // boxcar for the spark line and the ringing (well under a ringing period)
const APEX_SEARCH_S = 60e-6;
const SPARK_SKIP_S = 150e-6; // the firing line has settled into the spark line by then
const SPARK_PROBE_S = 250e-6; // window for the first spark-line level
const LEVEL_TRACK_S = 0.2e-3; // time constant of the spark-line level tracker
const MAX_BURN_S = 8e-3;
const RING_WINDOW_S = 4e-3;
const DWELL_SEARCH_S = 12e-3;
const DWELL_SMOOTH_S = 50e-6; // the turn-on is a slow step: smooth harder to see it under noise
/** ringing peaks count while at least this fraction of the first ringing peak */
export const RINGING_PEAK_FRACTION = 0.2;

interface RawEvent {
  apex: number;
  peakY: number;
  /** highest single sample of the firing line (for clipping) */
  rawPeakY: number;
  sparkLevel0: number;
  endFrac: number;
  burnS: number;
  burnLevelY: number;
  slopeYPerS: number | null;
  oscillations: number;
  ringingHz: number | null;
  dwellS: number | null;
  sparkStart: number;
  end: number;
  sparkSamples: number;
}

function medianOfSmall(a: Float32Array, from: number, to: number): number {
  const xs = Array.from(a.subarray(Math.max(0, from), Math.max(from, to))).sort((x, y) => x - y);
  const k = xs.length;
  if (k === 0) return 0;
  return k % 2 ? xs[k >> 1] : (xs[(k >> 1) - 1] + xs[k >> 1]) / 2;
}

export function analyzeSecondary(p: Prepared, ctx: SecondaryContext): SecondaryAnalysis {
  const { v, n, rate } = p;
  const robust = n ? robustLevelAndNoise(v) : { median: 0, noise: 0 };
  const base = robust.median;
  const noise = robust.noise;
  const pos = p.max - base;
  const neg = base - p.min;
  const sign: 1 | -1 = pos >= neg ? 1 : -1;
  // y = sign·(v − base): the signal as magnitudes on the firing line's side of the baseline
  const ymax = sign > 0 ? p.max - base : base - p.min;
  const ymin = sign > 0 ? p.min - base : base - p.max;

  const w = Math.max(1, Math.round(rate * SMOOTH_S) | 1);
  const wApex = Math.max(1, Math.round(rate * 2e-6) | 1);
  const noiseS = noise / Math.sqrt(w);
  const wDwell = Math.max(1, Math.round(rate * DWELL_SMOOTH_S) | 1);
  const noiseDwell = noise / Math.sqrt(wDwell);
  const thDet = Math.max(10 * noise, 0.03 * ymax, 1e-12);
  const apexWin = Math.max(2, Math.ceil(rate * APEX_SEARCH_S));
  const skip = Math.max(2, Math.ceil(rate * SPARK_SKIP_S));
  const probe = Math.max(3, Math.ceil(rate * SPARK_PROBE_S));
  const alpha = Math.min(0.5, 1 / (rate * LEVEL_TRACK_S));
  const persist = Math.max(1, Math.round(rate * 4e-6));
  const maxBurn = Math.ceil(rate * MAX_BURN_S);
  const ringWin = Math.ceil(rate * RING_WINDOW_S);
  const quietNeed = Math.max(2, Math.ceil(rate * 0.5e-3));

  const raw: RawEvent[] = [];
  let prevEnd = 0;
  let i = 1;
  const up = base + thDet;
  const down = base - thDet;
  while (i < n) {
    // next crossing of the detection threshold on the firing line's side
    if (sign > 0) {
      while (i < n && !(v[i] >= up && v[i - 1] < up)) i++;
    } else {
      while (i < n && !(v[i] <= down && v[i - 1] > down)) i++;
    }
    if (i >= n) break;
    // apex of the firing line; its height from a 2 µs average, which keeps the noise of a fast
    // capture from adding to the peak (the rounded apex loses under 1 % over ±1 µs)
    let apex = i;
    const apexEnd = Math.min(n, i + apexWin);
    let peakY = -Infinity;
    let rawPeakY = -Infinity;
    {
      const ya = boxcar(v, Math.max(0, i - wApex), Math.min(n, apexEnd + wApex), wApex, sign, base);
      const off = Math.max(0, i - wApex);
      for (let k = i; k < apexEnd; k++) {
        const yk = ya[k - off];
        if (yk > peakY) {
          peakY = yk;
          apex = k;
        }
        const rk = sign * (v[k] - base);
        if (rk > rawPeakY) rawPeakY = rk;
      }
    }
    const a = apex;
    const b = Math.min(n, apex + maxBurn + ringWin);
    if (a + skip + probe >= b) break; // the event runs off the end of the capture
    const ys = boxcar(v, a, b, w, sign, base);
    const len = b - a;

    // the spark line: first level, then track it until it collapses
    const level0 = medianOfSmall(ys, skip, skip + probe);
    const bandUp = Math.max(5 * noiseS, 0.35 * Math.abs(level0));
    const bandDown = Math.max(5 * noiseS, 0.45 * Math.abs(level0));
    const small = Math.max(2 * noiseS, 0.08 * Math.abs(level0));
    let lvl = level0;
    let dep = -1;
    let dir = 0;
    const burnLimit = Math.min(len, maxBurn);
    for (let j = skip; j < burnLimit; j++) {
      const d = ys[j] - lvl;
      const dj = d > bandUp ? 1 : d < -bandDown ? -1 : 0;
      if (dj !== 0) {
        let held = true;
        for (let k = j + 1; k < Math.min(len, j + persist); k++) {
          const dk = ys[k] - lvl;
          if (dj > 0 ? dk <= bandUp : dk >= -bandDown) {
            held = false;
            break;
          }
        }
        if (held) {
          dep = j;
          dir = dj;
          break;
        }
      }
      lvl += alpha * (ys[j] - lvl);
    }
    let endLocal: number; // fractional index (local) of the spark line's end
    if (dep < 0) {
      // the capture ends during the spark line: an incomplete event, not measured
      if (b === n && burnLimit === len) break;
      endLocal = burnLimit - 1;
    } else {
      // walk back to where the departure began
      let k = dep - 1;
      while (k > skip && dir * (ys[k] - lvl) > small) k--;
      const e0 = dir * (ys[k] - lvl);
      const e1 = dir * (ys[k + 1] - lvl);
      const f = e1 > e0 ? Math.min(1, Math.max(0, (small - e0) / (e1 - e0))) : 0;
      endLocal = k + f;
    }
    const endIdx = Math.floor(endLocal);

    // burn level (median of the spark line) and its slope (least squares)
    const sparkFrom = a + skip;
    const sparkTo = Math.max(sparkFrom + 1, a + endIdx);
    const burnLevelY = sign * (fastMedian(v, sparkFrom, sparkTo) - base);
    let slope: number | null = null;
    {
      const span = sparkTo - sparkFrom;
      const f0 = sparkFrom + Math.floor(span * 0.1);
      const f1 = sparkTo - Math.floor(span * 0.1);
      if (f1 - f0 >= 3) {
        let sx = 0;
        let sy = 0;
        let sxx = 0;
        let sxy = 0;
        const m = f1 - f0;
        for (let k = f0; k < f1; k++) {
          const x = (k - f0) / rate;
          const yy = v[k];
          sx += x;
          sy += yy;
          sxx += x * x;
          sxy += x * yy;
        }
        const den = m * sxx - sx * sx;
        if (den > 0) slope = (sign * (m * sxy - sx * sy)) / den;
      }
    }

    // coil ringing after the spark line
    let oscillations = 0;
    let ringingHz: number | null = null;
    let j = Math.max(1, endIdx);
    {
      const limit = Math.min(len, endIdx + ringWin);
      let m = -Infinity;
      let lastZero = NaN;
      const zeroAt = (k: number) => {
        const y0 = ys[k - 1];
        const y1 = ys[k];
        return k - 1 + (y0 !== y1 ? y0 / (y0 - y1) : 0);
      };
      let firstNeg = -1;
      for (; j < limit; j++) {
        if (ys[j - 1] >= 0 !== ys[j] >= 0) lastZero = zeroAt(j);
        if (ys[j] > m) m = ys[j];
        if (ys[j] < -Math.max(4 * noiseS, 0.05 * m)) {
          firstNeg = j;
          break;
        }
      }
      if (firstNeg > 0 && m > 4 * noiseS) {
        const r1 = m;
        const h = Math.max(4 * noiseS, 0.05 * r1);
        const peakTh = RINGING_PEAK_FRACTION * r1;
        const crossings: number[] = [];
        if (Number.isFinite(lastZero)) crossings.push(lastZero);
        oscillations = 1;
        let state = -1;
        let lobeMax = 0;
        let upZero = NaN;
        let since = firstNeg;
        const stale = Math.ceil(rate * 2e-3);
        let done = false;
        for (j = firstNeg + 1; j < limit && !done; j++) {
          if (ys[j - 1] >= 0 !== ys[j] >= 0) lastZero = zeroAt(j);
          if (state < 0) {
            if (ys[j] > h) {
              state = 1;
              lobeMax = ys[j];
              upZero = lastZero;
              since = j;
            } else if (j - since > stale) done = true;
          } else {
            if (ys[j] > lobeMax) lobeMax = ys[j];
            if (ys[j] < -h) {
              if (lobeMax >= peakTh) {
                oscillations++;
                if (Number.isFinite(upZero)) crossings.push(upZero);
                if (Number.isFinite(lastZero)) crossings.push(lastZero);
                state = -1;
                since = j;
              } else done = true;
            } else if (j - since > stale) {
              if (lobeMax >= peakTh) oscillations++;
              done = true;
            }
          }
        }
        if (!done && state > 0 && lobeMax >= peakTh) {
          oscillations++;
          if (Number.isFinite(upZero)) crossings.push(upZero);
        }
        if (crossings.length >= 2) {
          const t0c = timeAtFrac(p, a + crossings[0]);
          const t1c = timeAtFrac(p, a + crossings[crossings.length - 1]);
          if (t1c > t0c) ringingHz = (crossings.length - 1) / (2 * (t1c - t0c));
        }
      }
    }
    // the event lasts until the ringing has died away (quiet for 0.5 ms below half the threshold)
    let quiet = 0;
    for (; j < len && quiet < quietNeed; j++) quiet = Math.abs(ys[j]) < 0.5 * thDet ? quiet + 1 : 0;
    const ringEnd = Math.min(len - 1, j);

    // dwell: the coil's turn-on before the firing line, on the other side of the baseline
    let dwellS: number | null = null;
    {
      const pre = Math.max(2, Math.ceil(rate * 20e-6));
      const wa = Math.max(prevEnd, apex - Math.ceil(rate * DWELL_SEARCH_S));
      const wb = apex - pre;
      if (wb - wa > 4) {
        const yw = boxcar(v, wa, wb, wDwell, sign, base);
        let mi = 0;
        for (let k = 1; k < yw.length; k++) if (yw[k] < yw[mi]) mi = k;
        const depth = -yw[mi];
        if (depth > Math.max(8 * noiseDwell, 0.02 * peakY)) {
          // walk back from the deepest point to a quiet stretch of baseline (100 µs above the
          // threshold): the turn-on is where the signal left it
          const th = Math.max(4 * noiseDwell, 0.2 * depth);
          const quietRun = Math.max(2, Math.ceil(rate * 100e-6));
          let k = mi;
          let run = 0;
          let lastQuiet = -1;
          for (; k >= 0; k--) {
            if (yw[k] > -th) {
              if (run === 0) lastQuiet = k;
              run++;
              if (run >= quietRun) break;
            } else run = 0;
          }
          if (k >= 0 && lastQuiet >= 0 && lastQuiet + 1 < yw.length) {
            // time the step at half its local height (a centred boxcar leaves that point in place)
            const stepEnd = Math.min(yw.length, lastQuiet + Math.max(3, Math.ceil(rate * 200e-6)));
            let m2 = 0;
            for (let q = lastQuiet; q < stepEnd; q++) if (yw[q] < m2) m2 = yw[q];
            let q = lastQuiet;
            while (q + 1 < stepEnd && yw[q + 1] > 0.5 * m2) q++;
            const y0 = yw[q];
            const y1 = q + 1 < yw.length ? yw[q + 1] : y0;
            const f = y0 !== y1 ? (y0 - 0.5 * m2) / (y0 - y1) : 0;
            const tOn = timeAtFrac(p, wa + q + Math.min(1, Math.max(0, f)));
            dwellS = timeAtOf(p, apex) - tOn;
          }
        }
      }
    }

    const burnS = timeAtFrac(p, a + endLocal) - timeAtOf(p, apex);
    raw.push({
      apex,
      peakY,
      rawPeakY,
      sparkLevel0: level0,
      endFrac: a + endLocal,
      burnS,
      burnLevelY,
      slopeYPerS: slope,
      oscillations,
      ringingHz,
      dwellS,
      sparkStart: apex,
      end: a + ringEnd,
      sparkSamples: Math.max(0, endLocal),
    });
    prevEnd = a + ringEnd;
    i = a + ringEnd + 1;
  }

  // keep firing events: a spark line, or a firing line of the size of the others
  const maxPeak = raw.reduce((m, e) => Math.max(m, e.peakY), 0);
  const strong = raw.filter((e) => e.peakY >= 0.3 * maxPeak).map((e) => e.sparkLevel0).sort((x, z) => x - z);
  const refLevel = strong.length ? strong[strong.length >> 1] : 0;
  const kept = raw.filter(
    (e) =>
      e.peakY >= 0.3 * maxPeak ||
      (e.sparkLevel0 > Math.max(5 * noiseS, 0.25 * refLevel) && e.burnS >= 0.1e-3),
  );

  const clip = detectClipping(p, base, ctx.screen);
  const clipSide = sign > 0 ? clip.top : clip.bottom;
  // the ceiling on the firing line's side: the screen's edge when known, else the data's extreme
  const scr = ctx.screen;
  const clipLevelY = scr
    ? (sign > 0 ? scr.max - base : base - scr.min) - 0.005 * (scr.max - scr.min)
    : (sign > 0 ? p.max - base : base - p.min) * (1 - 1e-6);
  const sc = ctx.scale;
  const events: SecondaryEvent[] = kept.map((e) => ({
    timeS: timeAtOf(p, e.apex),
    peak: e.peakY * sc,
    burnTimeMs: e.burnS * 1e3,
    burnLevel: e.burnLevelY * sc,
    oscillations: e.oscillations,
    sparkSlope: e.slopeYPerS == null ? null : e.slopeYPerS * 1e-3 * sc,
    dwellMs: e.dwellS == null ? null : e.dwellS * 1e3,
    ringingHz: e.ringingHz,
    sparkStartS: timeAtOf(p, e.sparkStart),
    sparkEndS: timeAtFrac(p, e.endFrac),
    clipped: clipSide && e.rawPeakY >= clipLevelY,
  }));

  let rpm: number | null = null;
  if (events.length >= 2) {
    const periods: number[] = [];
    for (let k = 1; k < events.length; k++) periods.push(events[k].timeS - events[k - 1].timeS);
    periods.sort((x, y2) => x - y2);
    const mid = periods.length >> 1;
    const period = periods.length % 2 ? periods[mid] : (periods[mid - 1] + periods[mid]) / 2;
    if (period > 0) rpm = (ctx.wasteSpark ? 60 : 120) / period;
  }

  const summary: SecondarySummary = {
    eventCount: events.length,
    rpm,
    peak: metricStats(events.map((e) => e.peak)),
    burnTimeMs: metricStats(events.map((e) => e.burnTimeMs)),
    burnLevel: metricStats(events.map((e) => e.burnLevel)),
    oscillations: metricStats(events.map((e) => e.oscillations)),
    sparkSlope: metricStats(events.map((e) => e.sparkSlope)),
    dwellMs: metricStats(events.map((e) => e.dwellMs)),
    ringingHz: metricStats(events.map((e) => e.ringingHz)),
    polarity: sign > 0 ? "positive" : "negative",
    baseline: base * sc,
    noise: noise * sc,
  };

  // ---------- capture review ----------
  const findings: Finding[] = [];
  const s = ctx.settings;
  const toScopeV = p.toBase; // raw → volts at the scope
  const fmtU = (x: number) => `${fmt(x)} ${ctx.unit}`;

  if (clip.top || clip.bottom) {
    const clippedEvents = events.filter((e) => e.clipped).length;
    const where = clip.top && clip.bottom ? "top and bottom" : clip.top ? "top" : "bottom";
    const vpd = s.voltsPerDiv ? niceCeil(s.voltsPerDiv * 2) : null;
    const lowerBound = clippedEvents ? ` Those peaks read low: the real firing line is above ${fmtU(Math.min(clipLevelY, ymax) * sc)}.` : "";
    findings.push({
      code: "clipped",
      severity: "warning",
      message:
        `The trace sits flat against the ${where} of the range` +
        (events.length ? ` in ${clippedEvents} of ${events.length} firing lines.` : ".") +
        lowerBound,
      advice: withSafety(
        `Raise volts/division${vpd ? ` to ${fmt(vpd)} V/div or more` : ""}, or move the ground offset ${
          clip.top ? "down" : "up"
        }, so the whole firing line stays on the screen, then capture again.`,
      ),
    });
  }
  if (sign < 0) {
    findings.push({
      code: "inverted",
      severity: "info",
      message: "The firing lines point below the baseline (inverted capture). They are measured as magnitudes.",
      advice: withSafety(
        "Use the scope's invert function, or turn the pickup over on the coil, so the firing lines point up; set the trigger slope to match.",
      ),
    });
  }

  const medianBurnS = summary.burnTimeMs.median != null ? summary.burnTimeMs.median / 1e3 : null;
  const sparkSamples = medianBurnS != null ? medianBurnS * rate : null;
  if (events.length > 0 || n > 0) {
    const reasons: string[] = [];
    let severity: "warning" | "problem" | null = null;
    if (sparkSamples != null && sparkSamples < 20) {
      reasons.push(`only ${Math.round(sparkSamples)} samples across the spark line (20 or more are needed to measure it)`);
      severity = "problem";
    }
    if (rate < 100e3) {
      reasons.push(
        `a sample every ${fmtTime(1 / rate)} cannot catch the firing line, which rises and falls within microseconds: below 100 kS/s the peak heights cannot be trusted`,
      );
      severity = "problem";
    } else if (rate < 1e6) {
      reasons.push(
        `at ${fmtRate(rate)} the firing line's peak falls between samples and reads low: 1 MS/s or more is the usual practice for peak heights`,
      );
      severity = severity ?? "warning";
    }
    if (severity) {
      findings.push({
        code: "undersampled",
        severity,
        message: `Undersampled capture: ${reasons.join("; ")}.`,
        advice: withSafety(
          `Capture again at 1 MS/s or faster (shorten the time/division or raise the sample-rate setting).`,
        ),
      });
    }
  }
  if (events.length === 0) {
    findings.push({
      code: "no-events",
      severity: "problem",
      message: "No firing events found in this capture.",
      advice: withSafety(
        "Check that the pickup sits flat on the coil or clips round the plug lead, that the engine was running, and that time/division is long enough to hold at least one firing (one engine cycle is 120/rpm seconds).",
      ),
    });
  }
  const burnLevelRaw = summary.burnLevel.median != null ? summary.burnLevel.median / sc : null;
  if (burnLevelRaw != null && burnLevelRaw > 0 && noise > 0.15 * burnLevelRaw) {
    findings.push({
      code: "noisy",
      severity: "warning",
      message: `Noisy capture: the noise (${fmtU(noise * sc)} RMS) is ${Math.round((100 * noise) / burnLevelRaw)} % of the spark line's level.`,
      advice: withSafety(
        "Lay the pickup flat on top of the coil, as close as it goes, away from the other coils' wiring; keep the scope's ground lead short and on clean engine ground.",
      ),
    });
  }

  // trigger
  const minPeakY = kept.length ? Math.min(...kept.map((e) => e.peakY)) : null;
  const suggestedTriggerRaw = minPeakY != null ? base + sign * 0.5 * minPeakY : null;
  const suggestedTrigger = suggestedTriggerRaw != null ? roundNice(suggestedTriggerRaw * toScopeV) : null;
  if (s.triggerLevel != null && n > 0) {
    const levelRaw = s.triggerLevel / toScopeV;
    const yl = sign * (levelRaw - base);
    const sugg = suggestedTrigger != null ? ` A level of about ${fmt(suggestedTrigger)} V (half the lowest firing line${sign < 0 ? ", falling slope" : ""}) gives a stable display.` : "";
    if (yl > ymax || yl < ymin) {
      findings.push({
        code: "trigger-above-signal",
        severity: "warning",
        message: `The trigger level (${fmt(s.triggerLevel)} V) is beyond anything the signal reaches, so the scope would never trigger on it.`,
        advice: withSafety(`Bring the trigger level inside the firing lines.${sugg}`),
      });
    } else if (Math.abs(yl) < Math.max(4 * noise, 1e-12)) {
      findings.push({
        code: "trigger-below-noise",
        severity: "warning",
        message: `The trigger level (${fmt(s.triggerLevel)} V) sits within the baseline noise, so the display would trigger at random.`,
        advice: withSafety(`Raise the trigger level clear of the noise and the spark line.${sugg}`),
      });
    }
  }

  // framing
  let oneEvent: Suggestions["oneEvent"] = null;
  let allCylinders: Suggestions["allCylinders"] = null;
  if (events.length) {
    const peakScopeV = (maxPeak * toScopeV) * (clipSide ? 2 : 1);
    const offset = s.groundOffsetDiv ?? 0;
    const divs = sign > 0 ? 4 - offset : 4 + offset;
    const vpd = divs > 0.5 ? niceCeil((peakScopeV * 1.25) / divs) : null;
    const dwellMsMed = summary.dwellMs.median ?? 0;
    const spanMs = dwellMsMed + (summary.burnTimeMs.median ?? 0) + 1.5;
    const tpd = Math.max(0.5e-3, niceCeil(spanMs / 1e3 / 8));
    oneEvent = {
      timePerDivS: tpd,
      voltsPerDiv: vpd,
      reason: `one event (${dwellMsMed ? "dwell, " : ""}firing line, spark line and ringing, about ${fmt(spanMs, 2)} ms) across 8 of the 10 divisions with 10–20 % pre-trigger; the highest firing line at about 80 % of the divisions ${sign > 0 ? "above" : "below"} ground (common practice, no source)`,
    };
    if (rpm != null) {
      const cycle = 120 / rpm;
      allCylinders = {
        timePerDivS: niceCeil((cycle * 1.1) / 10),
        voltsPerDiv: vpd,
        reason: `one engine cycle (120/rpm = ${fmt(cycle * 1e3, 3)} ms at ${Math.round(rpm)} rpm) across the 10 divisions, so every cylinder fires once on screen (common practice, no source)`,
      };
    }
    const notes: string[] = [];
    if (s.timePerDivS != null && s.timePerDivS * 10 < (summary.burnTimeMs.median ?? 0) / 1e3 + 0.5e-3) {
      notes.push(`time/division (${fmtTime(s.timePerDivS)}/div) is too short to show a whole event: use ${fmtTime(tpd)}/div`);
    }
    if (s.voltsPerDiv != null && !clipSide && vpd != null && (maxPeak * toScopeV) / s.voltsPerDiv < 1.5) {
      notes.push(
        `the highest firing line is only ${fmt((maxPeak * toScopeV) / s.voltsPerDiv, 2)} divisions tall at ${fmt(s.voltsPerDiv)} V/div: use ${fmt(vpd)} V/div`,
      );
    }
    if (notes.length) {
      findings.push({
        code: "framing",
        severity: "info",
        message: `The capture view could frame the events better: ${notes.join("; ")}.`,
        advice: withSafety(`For one event: ${fmtTime(tpd)}/div${vpd ? `, ${fmt(vpd)} V/div` : ""}. ${oneEvent.reason}.`),
      });
    }
  }

  // erratic firing within the trace (event-to-event outliers of the firing line)
  if (events.length >= 4) {
    const z = modifiedZScores(events.map((e) => e.peak));
    const odd = z ? z.outlier.filter(Boolean).length : 0;
    if (z && odd > 0) {
      findings.push({
        code: "erratic-firing",
        severity: "warning",
        message: `The firing line changes from event to event: ${odd} of ${events.length} events differ from the median (${fmtU(z.median)}) by a modified z-score above 3.5.`,
        advice: withSafety(
          "An erratic firing line on one coil points to the coil breaking down or a plug/lead fault; compare with the other cylinders, then test the coil by the maker's procedure.",
        ),
      });
    }
  }

  return {
    events,
    summary,
    findings,
    suggestions: { oneEvent, allCylinders, triggerLevel: suggestedTrigger },
  };
}

