/**
 * Secondary ignition on a second, independently built model (demo/generators/ignition.ts), so the
 * analysis is not tuned to one generator's shapes:
 * - dwell start: the coil's charge (M·di/dt of an RL circuit charging: a step decaying with τp) on
 *   either side of the baseline, plus a damped wobble of a set fraction of the firing line (0–20 %;
 *   commonly 5–15 %, common practice, no source) at a set frequency, first swinging either way;
 * - firing line: an asymmetric Gaussian apex (rise and collapse widths set) at the breakdown height;
 * - spark line of set duration, level and slope, with turbulence (six sines, 3–60 kHz);
 * - extinction bump, then the coil's damped LC ringing, f = 1/(2π√(LC)) (trade reference),
 *   ωd = √(ω0² − 1/τ²);
 * - white noise, a baseline offset, polarity, a file in kV at the plug or volts at the scope through
 *   a pickup of k kV/V.
 * Truth comes from the parameters and the noise-free model (the apex found on a 1 ns grid).
 * The firing line is the event's largest excursion from the baseline (issue 11); the same event read
 * at 500 kS/s, 1, 2, 5 and 10 MS/s agrees within 2 % (issue 11) when the apex is resolved at
 * 500 kS/s (widths of several microseconds); ≥ 1 MS/s is the usual advice (trade reference).
 */
import { describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import type { CaptureSettings } from "../../../shared/schemas/capture-settings";
import type { SecondaryResult } from "../../../shared/analysis/types";
import { generateIgnition, type IgnitionOptions } from "../../../demo/generators/ignition";
import { generateSecondary } from "../../../demo/generators/secondary";

const RATES = [500e3, 1e6, 2e6, 5e6, 10e6];

function analyse(opts: IgnitionOptions, settings: Partial<CaptureSettings> = {}) {
  const g = generateIgnition(opts);
  const unitsSettings = opts.fileUnit && opts.fileUnit !== "kV" ? { kvPerVolt: opts.kvPerVolt ?? 10 } : {};
  const r = analyzeTrace(g.trace, { ...unitsSettings, ...settings }) as SecondaryResult;
  return { g, r };
}

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe("firing-line height: the same event at any adequate sample rate", () => {
  const variants: [string, IgnitionOptions][] = [
    ["rise 8 µs, collapse 4 µs, kV file", { riseUs: 8, fallUs: 4 }],
    [
      "rise 6 µs, collapse 3 µs, volts at the scope through 10 kV/V",
      { riseUs: 6, fallUs: 3, fileUnit: "V", kvPerVolt: 10 },
    ],
    ["rise 12 µs, collapse 6 µs, millivolts through 20 kV/V", { riseUs: 12, fallUs: 6, fileUnit: "mV", kvPerVolt: 20 }],
    ["symmetric 10 µs apex, inverted, baseline at 0.4 kV", { riseUs: 10, fallUs: 10, polarity: -1, baselineKv: 0.4 }],
    [
      "rise 5 µs, collapse 3 µs, 14 kV, noisy (0.15 kV), turbulent spark line",
      { riseUs: 5, fallUs: 3, peakKv: 14, noiseKv: 0.15, turbulence: 0.12 },
    ],
    [
      "rise 7 µs, collapse 4 µs, 6 kV coil-on-plug, dwell wobble 15 % toward the firing side",
      { riseUs: 7, fallUs: 4, peakKv: 6, levelKv: 1, wobbleFrac: 0.15 },
    ],
  ];
  it.each(variants)("%s: each rate within 2 % of the truth, all rates within 2 % of each other", (_n, v) => {
    const medians: number[] = [];
    for (const rate of RATES) {
      const { g, r } = analyse({ seed: 7, events: 2, sampleRateHz: rate, ...v });
      expect(r.unit).toBe("kV");
      expect(r.events.length).toBe(2);
      r.events.forEach((e, k) =>
        expect(
          rel(e.peak, g.truth.events[k].peakKv),
          `${rate} S/s event ${k}: ${e.peak} vs ${g.truth.events[k].peakKv}`,
        ).toBeLessThan(0.02),
      );
      medians.push(r.summary.peak.median!);
    }
    expect((Math.max(...medians) - Math.min(...medians)) / Math.min(...medians)).toBeLessThan(0.02);
  });

  it("the first generator's rounded apex (u²·e^(2(1−u)), 8 µs) also agrees across rates", () => {
    const medians = RATES.map((rate) => {
      const g = generateSecondary({ seed: 60, sampleRateHz: rate, events: 2, rpm: 3000, jitter: { peak: 0 } });
      const r = analyzeTrace(g.trace) as SecondaryResult;
      r.events.forEach((e, k) => expect(rel(e.peak, g.truth.events[k].peak)).toBeLessThan(0.02));
      return r.summary.peak.median!;
    });
    expect((Math.max(...medians) - Math.min(...medians)) / Math.min(...medians)).toBeLessThan(0.02);
  });

  it("a sharp apex (collapse in 1 µs) is not read low at 5 MS/s and above", () => {
    for (const rate of [5e6, 10e6]) {
      const { g, r } = analyse({ seed: 8, sampleRateHz: rate, riseUs: 2, fallUs: 1 });
      r.events.forEach((e, k) => expect(rel(e.peak, g.truth.events[k].peakKv)).toBeLessThan(0.01));
    }
  });

  it("a lone glitch is left out; it neither raises a firing line nor makes an event", () => {
    const base = analyse({ seed: 9, sampleRateHz: 2e6, events: 2 });
    const apex = base.g.truth.events[0].timeS;
    // one sample 5 kV above the first firing line's apex, and one 15 kV spike on the quiet baseline
    const { g, r } = analyse({
      seed: 9,
      sampleRateHz: 2e6,
      events: 2,
      glitches: [
        { timeS: apex + 1e-6, kv: 5 },
        { timeS: 0.025, kv: 15 },
      ],
    });
    expect(r.events.length).toBe(2);
    r.events.forEach((e, k) => expect(rel(e.peak, g.truth.events[k].peakKv)).toBeLessThan(0.02));
  });
});

describe("firing events told from dwell starts by shape (issue 11)", () => {
  const cases: [number, boolean, number, number, number][] = [];
  for (const wobble of [0, 0.05, 0.1, 0.15, 0.2])
    for (const toward of [true, false])
      for (const [hz, charge] of [
        [8e3, 0.3],
        [25e3, -0.4],
      ])
        for (const rate of [500e3, 2e6]) cases.push([wobble, toward, hz, charge, rate]);

  it.each(cases)(
    "wobble %s of the firing line (toward the firing side: %s) at %i Hz, coil charge %s kV, %i S/s",
    (wobble, toward, hz, charge, rate) => {
      const { g, r } = analyse({
        seed: 11,
        events: 3,
        sampleRateHz: rate,
        wobbleFrac: wobble,
        wobbleTowardFiring: toward,
        wobbleHz: hz,
        chargeKv: charge,
        dwellMs: 2.5,
      });
      // no firing lost, none placed on a dwell start
      expect(r.events.length).toBe(3);
      r.events.forEach((e, k) => {
        const t = g.truth.events[k];
        expect(Math.abs(e.timeS - t.timeS)).toBeLessThan(2 / rate + 2e-6);
        expect(rel(e.peak, t.peakKv)).toBeLessThan(0.02);
        expect(rel(e.burnTimeMs, t.burnMs)).toBeLessThan(0.05);
        expect(rel(e.burnLevel, t.levelKv)).toBeLessThan(0.1);
        // dwell: turn-on to firing line, within 5 % or 0.1 ms
        expect(e.dwellMs).not.toBeNull();
        expect(Math.abs(e.dwellMs! - t.dwellMs!)).toBeLessThan(Math.max(0.05 * t.dwellMs!, 0.1));
      });
      // no spurious finding: the noise is 1 % of the spark line (noisy starts at 15 %)
      expect(r.findings.map((f) => f.code).filter((c) => c !== "undersampled")).toEqual([]);
    },
  );

  it("a dwell as short as 1 ms with a 20 % wobble on the firing side, and a capture without the turn-on", () => {
    const a = analyse({ seed: 12, events: 3, sampleRateHz: 1e6, wobbleFrac: 0.2, chargeKv: -0.5, dwellMs: 1 });
    expect(a.r.events.length).toBe(3);
    a.r.events.forEach((e, k) => expect(Math.abs(e.dwellMs! - a.g.truth.events[k].dwellMs!)).toBeLessThan(0.1));
    const b = analyse({ seed: 13, events: 2, sampleRateHz: 1e6, dwellMs: null });
    expect(b.r.events.length).toBe(2);
    expect(b.r.events.every((e) => e.dwellMs === null)).toBe(true);
  });
});

describe("ringing and extinction bumps are not firings; the ringing follows the LC formula", () => {
  it.each([
    // trade reference worked values: L = 20 H, C = 50 pF → 5.03 kHz; L = 10 H, C = 50 pF → 7.12 kHz
    [20, 50e-12, 5.03e3],
    [10, 50e-12, 7.12e3],
    [15, 60e-12, 1 / (2 * Math.PI * Math.sqrt(15 * 60e-12))],
  ])(
    "L = %d H, C = %s F: ringing at f = 1/(2π√(LC)) = %d Hz, big extinction bump, big first ringing lobe",
    (L, C, f0) => {
      expect(Math.abs(1 / (2 * Math.PI * Math.sqrt(L * C)) - f0) / f0).toBeLessThan(0.001);
      const { g, r } = analyse({
        seed: 14,
        events: 3,
        sampleRateHz: 2e6,
        coilH: L,
        coilF: C,
        ringTauPeriods: 4,
        bumpFrac: 0.6,
        ringB: 2.5,
      });
      expect(r.events.length).toBe(3);
      // the damped frequency is within 0.2 % of f0 at τ = 4 periods; the reading within 3 %
      for (const e of r.events) expect(rel(e.ringingHz!, g.truth.events[0].ringingHz)).toBeLessThan(0.03);
    },
  );

  it.each([
    ["a short burn (0.6 ms) with 15 % turbulence", { burnMs: 0.6, turbulence: 0.15 }],
    ["a long burn (2.5 ms) on a rising spark line", { burnMs: 2.5, slopeKvPerMs: 0.3 }],
    ["a fouled-plug-like event: low firing line, long burn", { peakKv: 5, levelKv: 1.2, burnMs: 2.2 }],
  ] as [string, IgnitionOptions][])("%s: burn time within 5 % (or 50 µs)", (_n, v) => {
    const { g, r } = analyse({ seed: 15, events: 3, sampleRateHz: 1e6, ...v });
    expect(r.events.length).toBe(3);
    // the model's extinction bump rises over the spark line's last 40 µs: its end is that uncertain
    r.events.forEach((e, k) =>
      expect(Math.abs(e.burnTimeMs - g.truth.events[k].burnMs)).toBeLessThan(
        Math.max(0.05 * g.truth.events[k].burnMs, 0.05),
      ),
    );
  });
});

describe("a badly placed pickup picking up heavy noise loses no firing", () => {
  // white noise of 10–11 % of the firing line (1 kV RMS on 9.5–10 kV, 1 MS/s): the firing lines stand
  // about ten noise RMS above the baseline, no more — every firing is still one, and the capture is
  // `noisy`
  it.each([
    [51, 10],
    [52, 9.5],
    [53, 9.5],
    [54, 10],
  ])("seed %i, %d kV firing lines: three firings, each where the model put it", (seed, peakKv) => {
    const { g, r } = analyse({ seed, events: 3, sampleRateHz: 1e6, noiseKv: 1.0, peakKv, turbulence: 0.1 });
    expect(r.events.length).toBe(3);
    r.events.forEach((e, k) => expect(Math.abs(e.timeS - g.truth.events[k].timeS)).toBeLessThan(20e-6));
    expect(r.findings.map((f) => f.code)).toContain("noisy");
  });
});
