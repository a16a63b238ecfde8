import { describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import { SECONDARY_SAFETY } from "../../../shared/analysis/findings";
import type { FindingCode, SecondaryResult } from "../../../shared/analysis/types";
import type { CaptureSettings } from "../../../shared/schemas/capture-settings";
import { parseTraceText } from "../../../shared/trace/parse";
import { renderCsv, type CsvOptions } from "../../../demo/generators/csv";
import { generateSecondary, type SecondaryOptions, type SecondaryTruth } from "../../../demo/generators/secondary";

interface Case {
  name: string;
  gen: SecondaryOptions;
  csv?: CsvOptions;
  kvPerVolt?: number;
  /** findings that may appear besides the expected ones (none unless said) */
  allow?: FindingCode[];
}

/**
 * The findings the capture should get, from the rules: undersampled under 1 MS/s (warning)
 * or under 100 kS/s (problem), inverted when the firing lines point down, clipped when the
 * generator clipped the signal, noisy when the noise is 15 % of the spark line or more.
 */
function expectedFindings(truth: SecondaryTruth): FindingCode[] {
  const codes: FindingCode[] = [];
  if (truth.clipped) codes.push("clipped");
  if (truth.polarity < 0) codes.push("inverted");
  if (truth.sampleRateHz < 1e6) codes.push("undersampled");
  const level = truth.events[0]?.burnLevel ?? 1;
  if (truth.noiseV >= 0.15 * level) codes.push("noisy");
  return codes.sort();
}

const within = (actual: number, expected: number, tol: number) => Math.abs(actual - expected) <= tol;

const cases: Case[] = [
  { name: "20 kS/s, 4 events at 3000 rpm", gen: { seed: 11, sampleRateHz: 20e3, events: 4, rpm: 3000 } },
  { name: "20 kS/s, inverted, 2 events", gen: { seed: 12, sampleRateHz: 20e3, events: 2, rpm: 1500, polarity: -1 } },
  {
    name: "50 kS/s, CSV with ';', decimal comma, millivolts",
    gen: { seed: 13, sampleRateHz: 50e3, events: 3, rpm: 2000 },
    csv: { delimiter: ";", decimal: ",", valueUnit: "mV" },
  },
  { name: "100 kS/s, 2 events", gen: { seed: 14, sampleRateHz: 100e3, events: 2, rpm: 2000 } },
  {
    name: "200 kS/s, inverted, 4 events, tab-separated, time in ms",
    gen: { seed: 15, sampleRateHz: 200e3, events: 4, rpm: 3000, polarity: -1 },
    csv: { delimiter: "\t", timeUnit: "ms" },
  },
  { name: "500 kS/s, 1 event", gen: { seed: 16, sampleRateHz: 500e3, events: 1 } },
  { name: "1 MS/s, 2 events at idle (750 rpm)", gen: { seed: 17, sampleRateHz: 1e6, events: 2, rpm: 750 } },
  {
    name: "1 MS/s, inverted, 3 events, kV scale",
    gen: { seed: 18, sampleRateHz: 1e6, events: 3, rpm: 2500, polarity: -1 },
    kvPerVolt: 10,
  },
  {
    name: "1 MS/s, clipped at the top",
    gen: { seed: 19, sampleRateHz: 1e6, events: 4, rpm: 3000, clip: { high: 0.5 } },
  },
  { name: "2 MS/s, noisy pickup", gen: { seed: 20, sampleRateHz: 2e6, events: 2, rpm: 3000, noiseV: 0.04 } },
  {
    name: "2 MS/s, time in µs with bracket header, millivolts",
    gen: { seed: 21, sampleRateHz: 2e6, events: 1 },
    csv: { timeUnit: "us", timeHeader: "bracket", valueUnit: "mV" },
  },
  { name: "5 MS/s, 1 event", gen: { seed: 22, sampleRateHz: 5e6, events: 1 } },
  { name: "5 MS/s, inverted and noisy", gen: { seed: 23, sampleRateHz: 5e6, events: 1, polarity: -1, noiseV: 0.03 } },
  { name: "5 MS/s, 2 events at 6000 rpm", gen: { seed: 24, sampleRateHz: 5e6, events: 2, rpm: 6000 } },
  {
    name: "1 MS/s, waste spark at 1500 rpm",
    gen: { seed: 25, sampleRateHz: 1e6, events: 3, rpm: 1500, wasteSpark: true },
  },
  {
    name: "1 MS/s, turn-on not in the capture",
    gen: { seed: 26, sampleRateHz: 1e6, events: 2, rpm: 3000, dwellMs: null },
  },
  {
    name: "1 MS/s, 10 H coil, 4 ringing peaks, long dwell",
    gen: { seed: 27, sampleRateHz: 1e6, events: 2, rpm: 2000, coilInductanceH: 10, ringPeaks: 4, dwellMs: 4.5 },
  },
  {
    name: "2 MS/s, baseline offset, rising spark line, suffix time header",
    gen: { seed: 28, sampleRateHz: 2e6, events: 2, rpm: 3000, baselineV: 0.05, sparkSlopeVPerMs: 0.02 },
    csv: { timeHeader: "suffix", timeUnit: "ms" },
  },
  {
    name: "300 kS/s, inverted and clipped at the bottom",
    gen: { seed: 29, sampleRateHz: 300e3, events: 3, rpm: 2000, polarity: -1, clip: { low: -0.55 } },
  },
  {
    name: "1 MS/s, scientific notation with metadata lines",
    gen: { seed: 30, sampleRateHz: 1e6, events: 2, rpm: 3000, noiseV: 0.001 },
    csv: { scientific: true, preamble: ["# exported capture", "Model: bench scope", "Probe: capacitive"] },
  },
  {
    name: "40 kS/s, 2 ringing peaks, 3 events",
    gen: { seed: 31, sampleRateHz: 40e3, events: 3, rpm: 2500, ringPeaks: 2 },
  },
  {
    name: "1 MS/s, shorted turns: no ringing",
    gen: { seed: 32, sampleRateHz: 1e6, events: 2, rpm: 3000, fault: "shorted-turns" },
  },
  { name: "1 MS/s, wide plug gap", gen: { seed: 33, sampleRateHz: 1e6, events: 2, rpm: 3000, fault: "wide-gap" } },
  { name: "1 MS/s, fouled plug", gen: { seed: 34, sampleRateHz: 1e6, events: 2, rpm: 3000, fault: "fouled-plug" } },
  {
    name: "1 MS/s, coil breaking down, 4 events",
    gen: { seed: 35, sampleRateHz: 1e6, events: 4, rpm: 3000, fault: "coil-breakdown" },
    allow: ["erratic-firing"],
  },
];

describe("secondary ignition: generated captures with known truth", () => {
  it("covers at least 20 cases over 20 kS/s to 5 MS/s, both polarities, noise, clipping, 1–4 events, CSV variants", () => {
    expect(cases.length).toBeGreaterThanOrEqual(20);
    const rates = cases.map((c) => c.gen.sampleRateHz!);
    expect(Math.min(...rates)).toBe(20e3);
    expect(Math.max(...rates)).toBe(5e6);
    expect(cases.some((c) => c.gen.polarity === -1)).toBe(true);
    expect(cases.some((c) => c.gen.clip)).toBe(true);
    expect(cases.filter((c) => c.csv).length).toBeGreaterThanOrEqual(5);
    expect(new Set(cases.map((c) => c.gen.events)).size).toBe(4);
  });

  it.each(cases.map((c) => [c.name, c] as const))("%s", (_name, c) => {
    const g = generateSecondary(c.gen);
    const trace = c.csv ? parseTraceText(renderCsv(g.trace, c.csv)) : g.trace;
    if (c.csv) {
      expect(trace.samples).toBe(g.trace.samples);
      expect(Math.abs(trace.sampleRateHz - g.trace.sampleRateHz) / g.trace.sampleRateHz).toBeLessThan(1e-6);
    }
    const kv = c.kvPerVolt ?? 1;
    const r = analyzeTrace(trace, {}, { kvPerVolt: c.kvPerVolt, wasteSpark: c.gen.wasteSpark }) as SecondaryResult;
    const t = g.truth;
    expect(r.kind).toBe("secondary-ignition");
    expect(r.unit).toBe(c.kvPerVolt ? "kV" : "V");
    expect(r.summary.eventCount).toBe(t.eventCount);
    expect(r.summary.polarity).toBe(t.polarity > 0 ? "positive" : "negative");
    const peakTrusted = t.sampleRateHz >= 1e6 && !t.clipped;
    r.events.forEach((e, k) => {
      const te = t.events[k];
      // burn time within max(5 %, 0.1 ms)
      expect(
        within(e.burnTimeMs, te.burnTimeMs, Math.max(0.05 * te.burnTimeMs, 0.1)),
        `burn ${e.burnTimeMs} vs ${te.burnTimeMs}`,
      ).toBe(true);
      // oscillations within 1
      expect(
        Math.abs(e.oscillations - te.oscillations),
        `oscillations ${e.oscillations} vs ${te.oscillations}`,
      ).toBeLessThanOrEqual(1);
      // peak within 5 % where the capture can hold it (≥ 1 MS/s, not clipped)
      if (peakTrusted)
        expect(within(e.peak, te.peak * kv, 0.05 * te.peak * kv), `peak ${e.peak} vs ${te.peak * kv}`).toBe(true);
      else expect(e.peak).toBeLessThanOrEqual(te.peak * kv * 1.02);
      expect(
        within(e.burnLevel, te.burnLevel * kv, 0.05 * te.burnLevel * kv + 3 * t.noiseV * kv),
        `level ${e.burnLevel}`,
      ).toBe(true);
      expect(Math.abs(e.timeS - te.timeS)).toBeLessThan(2 / t.sampleRateHz + 5e-6);
      if (te.dwellMs == null) expect(e.dwellMs).toBeNull();
      else if (e.dwellMs != null || t.noiseV < 0.15 * te.burnLevel) {
        expect(
          within(e.dwellMs!, te.dwellMs, Math.max(0.05 * te.dwellMs, 0.1)),
          `dwell ${e.dwellMs} vs ${te.dwellMs}`,
        ).toBe(true);
      }
      if (te.oscillations >= 2 && e.ringingHz != null)
        expect(within(e.ringingHz, te.ringingHz, 0.03 * te.ringingHz)).toBe(true);
      expect(e.sparkEndS).toBeGreaterThan(e.sparkStartS);
      expect(e.clipped).toBe(te.clipped);
    });
    // rpm within 1 % (null with fewer than two events)
    if (t.rpm == null) expect(r.summary.rpm).toBeNull();
    else expect(within(r.summary.rpm!, t.rpm, 0.01 * t.rpm), `rpm ${r.summary.rpm} vs ${t.rpm}`).toBe(true);
    // the expected findings and no false ones
    const codes = r.findings
      .map((f) => f.code)
      .filter((code) => !(c.allow ?? []).includes(code))
      .sort();
    expect(codes).toEqual(expectedFindings(t));
    if (t.sampleRateHz < 100e3) expect(r.findings.find((f) => f.code === "undersampled")!.severity).toBe("problem");
    // the safety caution once per trace, beside the first advice (issue 11), findings worst first
    const cautioned = r.findings.filter((f) => f.advice.includes(SECONDARY_SAFETY));
    expect(cautioned.length).toBe(r.findings.length ? 1 : 0);
    if (r.findings.length) expect(r.findings[0].advice).toContain(SECONDARY_SAFETY);
  });
});

describe("secondary ignition: physics and the trade's reference values", () => {
  it.each([
    [20, 50e-12, 5.03e3],
    [10, 50e-12, 7.12e3],
  ])("coil ringing of a damped LC circuit, f = 1/(2π√(LC)): L = %d H, C = %s F → %d Hz", (L, C, f) => {
    // formula and worked values: trade reference (LC resonance); 20 H / 50 pF → 5.03 kHz, 10 H → 7.12 kHz
    const f0 = 1 / (2 * Math.PI * Math.sqrt(L * C));
    expect(Math.abs(f0 - f) / f).toBeLessThan(0.001);
    const g = generateSecondary({
      seed: 40,
      sampleRateHz: 1e6,
      events: 2,
      rpm: 3000,
      coilInductanceH: L,
      coilCapacitanceF: C,
      ringPeaks: 5,
    });
    const r = analyzeTrace(g.trace) as SecondaryResult;
    // light damping lowers the frequency by well under 1 % (ωd = √(ω0² − 1/τ²))
    for (const e of r.events) expect(Math.abs(e.ringingHz! - f0) / f0).toBeLessThan(0.015);
  });

  it("a healthy coil-on-plug at idle reads within the trade's typical ranges (soft bounds)", () => {
    const g = generateSecondary({ seed: 41, sampleRateHz: 1e6, events: 3, rpm: 750, peakV: 0.8 });
    const r = analyzeTrace(g.trace, { kvPerVolt: 10 }) as SecondaryResult;
    const s = r.summary;
    expect(r.unit).toBe("kV");
    // firing line 8–15 kV typical, coil-on-plug often 5–10 kV (public ASE-style study material)
    expect(s.peak.median!).toBeGreaterThanOrEqual(5);
    expect(s.peak.median!).toBeLessThanOrEqual(15);
    // cylinders within ~2–3 kV of each other (spread rule common practice): here event to event
    expect(s.peak.max! - s.peak.min!).toBeLessThan(3);
    // spark line 0.5–2.5 kV, burn time 0.8–2.0 ms (public ASE-style study material)
    expect(s.burnLevel.median!).toBeGreaterThanOrEqual(0.5);
    expect(s.burnLevel.median!).toBeLessThanOrEqual(2.5);
    expect(s.burnTimeMs.median!).toBeGreaterThanOrEqual(0.8);
    expect(s.burnTimeMs.median!).toBeLessThanOrEqual(2.0);
    // 2–5 coil-ringing cycles after the burn; dwell 2–5 ms (from memory)
    expect(s.oscillations.median!).toBeGreaterThanOrEqual(2);
    expect(s.oscillations.median!).toBeLessThanOrEqual(5);
    expect(s.dwellMs.median!).toBeGreaterThanOrEqual(2);
    expect(s.dwellMs.median!).toBeLessThanOrEqual(5);
    // even firing at 750 rpm: one spark per cylinder every 720°, 120/rpm s = 160 ms (trade reference)
    expect(Math.abs(r.events[1].timeS - r.events[0].timeS - 0.16)).toBeLessThan(0.002);
    expect(s.rpm!).toBeCloseTo(750, -1);
  });

  it("samples per burn = burn time × sample rate: 1.5 ms at 1 MS/s is 1500 samples (trade reference)", () => {
    const g = generateSecondary({ seed: 42, sampleRateHz: 1e6, events: 1, burnTimeMs: 1.5, jitter: { burn: 0 } });
    const r = analyzeTrace(g.trace) as SecondaryResult;
    const samples = (r.events[0].sparkEndS - r.events[0].sparkStartS) * g.trace.sampleRateHz;
    expect(Math.abs(samples - g.truth.events[0].burnTimeMs * 1e3)).toBeLessThan(100);
    expect(r.findings.some((f) => f.code === "undersampled")).toBe(false);
  });

  it("fewer than 20 samples across the spark line is a problem", () => {
    // a 0.6 ms spark at 20 kS/s: 12 samples
    const g = generateSecondary({ seed: 43, sampleRateHz: 20e3, events: 2, rpm: 3000, burnTimeMs: 0.6 });
    const r = analyzeTrace(g.trace) as SecondaryResult;
    const f = r.findings.find((x) => x.code === "undersampled")!;
    expect(f.severity).toBe("problem");
    expect(f.message).toMatch(/samples across the spark line/);
  });
});

describe("secondary ignition: capture review from the settings", () => {
  const g = generateSecondary({ seed: 50, sampleRateHz: 1e6, events: 2, rpm: 3000 });
  const base: Partial<CaptureSettings> = { voltsPerDiv: 0.2, timePerDivS: 5e-3 };
  const codes = (s: Partial<CaptureSettings>) =>
    (analyzeTrace(g.trace, s) as SecondaryResult).findings.map((f) => f.code);

  it("good settings give no findings", () => {
    expect(codes(base)).toEqual([]);
    expect(codes({ ...base, triggerLevel: 0.3 })).toEqual([]);
  });

  it("a trigger level above every firing line: trigger-above-signal, with a level suggested", () => {
    const r = analyzeTrace(g.trace, { ...base, triggerLevel: 2 }) as SecondaryResult;
    const f = r.findings.find((x) => x.code === "trigger-above-signal")!;
    expect(f.severity).toBe("warning");
    // half the lowest firing line, about 0.4 V
    expect(r.suggestions.triggerLevel!).toBeGreaterThan(0.3);
    expect(r.suggestions.triggerLevel!).toBeLessThan(0.5);
    // the level as the tech sets it, in the scope's unit (volts here: no pickup scale given)
    expect(r.suggestions.triggerText).toBe(`${r.suggestions.triggerLevel! * 1000} mV`);
    expect(f.advice).toContain(r.suggestions.triggerText!);
    expect(f.advice).toContain(SECONDARY_SAFETY);
  });

  it("a trigger level inside the noise: trigger-below-noise", () => {
    expect(codes({ ...base, triggerLevel: 0.002 })).toEqual(["trigger-below-noise"]);
  });

  it("a screen too small for the firing line, but a file that holds it whole: not clipped, said as framing", () => {
    // 0.05 V/div: the screen ends at 0.2 V, the firing lines reach 0.8 V in the file. The scope recorded
    // past its screen, so nothing was cut (the events' heights are not lower bounds; an earlier rule
    // called this clipped, which contradicted the heights it reported); the tech's screen cut them off.
    const r = analyzeTrace(g.trace, { ...base, voltsPerDiv: 0.05 }) as SecondaryResult;
    expect(r.findings.map((f) => f.code)).not.toContain("clipped");
    expect(r.events.some((e) => e.clipped)).toBe(false);
    r.events.forEach((e, k) =>
      expect(Math.abs(e.peak - g.truth.events[k].peak) / g.truth.events[k].peak).toBeLessThan(0.02),
    );
    const f = r.findings.find((x) => x.code === "framing")!;
    expect(f.message).toMatch(/goes past the top of the screen at 50 mV\/div/);
    // a volts/division whose 4 divisions above ground hold the 0.8 V firing line
    const vpd = Number(/: use ([\d.]+) (m?)V\/div/.exec(f.message)![1]);
    expect(vpd * 4).toBeGreaterThan(0.8);
  });

  it("a file cut at the screen's edge (the scope records what its screen holds) is clipped", () => {
    // the same capture recorded only up to the top of a 0.05 V/div screen: 4 divisions, 0.2 V
    const values = Float32Array.from(g.trace.channels[0].values, (x) => Math.min(x, 0.2));
    const cut = { ...g.trace, channels: [{ ...g.trace.channels[0], values, max: 0.2 }] };
    const r = analyzeTrace(cut, { ...base, voltsPerDiv: 0.05 }) as SecondaryResult;
    expect(r.findings.map((f) => f.code)).toContain("clipped");
    expect(r.events.every((e) => e.clipped)).toBe(true);
    expect(r.findings.find((f) => f.code === "clipped")!.advice).toMatch(/V\/div/);
  });

  it("framing: too coarse volts/division or too short a time base gets a suggestion with its reason", () => {
    const r = analyzeTrace(g.trace, { voltsPerDiv: 2, timePerDivS: 0.05e-3 }) as SecondaryResult;
    const f = r.findings.find((x) => x.code === "framing")!;
    expect(f.severity).toBe("info");
    expect(f.message).toMatch(/divisions tall/);
    expect(f.message).toMatch(/too short/);
    // one event at 0.5–1 ms/div (common practice, no source); all cylinders: one engine cycle, 120/rpm
    expect(r.suggestions.oneEvent!.timePerDivS).toBeGreaterThanOrEqual(0.5e-3);
    expect(r.suggestions.oneEvent!.timePerDivS).toBeLessThanOrEqual(1e-3);
    expect(r.suggestions.allCylinders!.timePerDivS * 10).toBeGreaterThanOrEqual(120 / r.summary.rpm!);
    expect(r.suggestions.allCylinders!.reason).toMatch(/120\/rpm/);
    // the highest firing line (0.8 V) fits with headroom at the suggested volts/division
    expect(r.suggestions.oneEvent!.voltsPerDiv! * 4).toBeGreaterThan(0.8);
    expect(r.suggestions.oneEvent!.voltsPerDiv! * 4).toBeLessThan(0.8 * 3);
  });

  it("a capture with no firing: no-events, a problem", () => {
    const flat = generateSecondary({ seed: 51, sampleRateHz: 1e6, events: 0, durationS: 0.02 });
    const r = analyzeTrace(flat.trace) as SecondaryResult;
    expect(r.summary.eventCount).toBe(0);
    expect(r.summary.rpm).toBeNull();
    expect(r.summary.peak).toEqual({ median: null, min: null, max: null });
    const f = r.findings.find((x) => x.code === "no-events")!;
    expect(f.severity).toBe("problem");
    expect(f.advice).toContain(SECONDARY_SAFETY);
  });

  it("an event cut off by the end of the capture is left out, not measured short", () => {
    const cut = generateSecondary({ seed: 52, sampleRateHz: 1e6, events: 2, rpm: 3000, durationS: 0.0448 });
    // the second firing line is in the capture, its spark line runs past the end
    expect(cut.truth.events[1].timeS).toBeLessThan(0.0448);
    expect(cut.truth.events[1].timeS + cut.truth.events[1].burnTimeMs / 1e3).toBeGreaterThan(0.0448);
    const r = analyzeTrace(cut.trace) as SecondaryResult;
    expect(r.summary.eventCount).toBe(1);
    expect(Math.abs(r.events[0].burnTimeMs - cut.truth.events[0].burnTimeMs)).toBeLessThan(0.1);
  });

  it("the result is plain JSON: it survives a round trip unchanged", () => {
    const r = analyzeTrace(g.trace, base);
    expect(JSON.parse(JSON.stringify(r))).toEqual(r);
  });
});
