import { describe, expect, it } from "vitest";
import FFT from "fft.js";
import * as ss from "simple-statistics";
import { measure } from "../../../shared/analysis/measure";
import { createRng } from "../../helpers/prng";

/** Dominant frequency by fft.js, refined by a parabola through the log-magnitudes (a common estimator). */
function fftFrequency(v: Float32Array, rate: number): number {
  const size = 1 << Math.floor(Math.log2(v.length));
  const f = new FFT(size);
  const input = new Array<number>(size);
  let mean = 0;
  for (let i = 0; i < size; i++) mean += v[i] / size;
  for (let i = 0; i < size; i++) input[i] = (v[i] - mean) * (0.5 - 0.5 * Math.cos((2 * Math.PI * i) / (size - 1))); // Hann window
  const out = f.createComplexArray();
  f.realTransform(out, input);
  const mag = (k: number) => Math.hypot(out[2 * k], out[2 * k + 1]);
  let best = 1;
  for (let k = 2; k < size / 2; k++) if (mag(k) > mag(best)) best = k;
  const a = Math.log(mag(best - 1));
  const b = Math.log(mag(best));
  const c = Math.log(mag(best + 1));
  const delta = (0.5 * (a - c)) / (a - 2 * b + c);
  return ((best + delta) * rate) / size;
}

function wave(n: number, rate: number, f: (t: number) => number, noise = 0, seed = 1): Float32Array {
  const r = createRng(seed);
  const v = new Float32Array(n);
  for (let i = 0; i < n; i++) v[i] = f(i / rate) + noise * r.normal();
  return v;
}

describe("generic measurements", () => {
  it("min, max, peak-to-peak, mean and RMS agree with simple-statistics", () => {
    const rate = 10_000;
    const v = wave(5000, rate, (t) => 1.5 + 2 * Math.sin(2 * Math.PI * 37 * t), 0.2, 3);
    const m = measure({ values: v, sampleRateHz: rate });
    const xs = Array.from(v);
    // reference: simple-statistics min / max / mean / rootMeanSquare
    expect(m.min).toBe(ss.min(xs));
    expect(m.max).toBe(ss.max(xs));
    expect(m.peakToPeak).toBeCloseTo(ss.max(xs) - ss.min(xs), 6);
    expect(m.mean).toBeCloseTo(ss.mean(xs), 9);
    expect(m.rms).toBeCloseTo(ss.rootMeanSquare(xs), 9);
  });

  it.each([
    ["sine 1234.5 Hz", 50_000, (t: number) => Math.sin(2 * Math.PI * 1234.5 * t), 0.05],
    ["square 60 Hz, 30 % duty", 20_000, (t: number) => ((t * 60) % 1 < 0.3 ? 5 : 0), 0.1],
    ["sine 7.1 kHz", 500_000, (t: number) => 0.3 * Math.sin(2 * Math.PI * 7100 * t + 1), 0.01],
  ] as const)("frequency of a %s matches the FFT of fft.js", (_name, rate, f, noise) => {
    const v = wave(1 << 15, rate, f, noise, 5);
    const m = measure({ values: v, sampleRateHz: rate });
    const ref = fftFrequency(v, rate); // reference: fft.js spectrum peak
    expect(m.frequencyHz).not.toBeNull();
    expect(Math.abs(m.frequencyHz! - ref) / ref).toBeLessThan(0.005);
    expect(m.periodS! * m.frequencyHz!).toBeCloseTo(1, 9);
  });

  it("duty cycle of a square wave", () => {
    const rate = 100_000;
    const v = wave(50_000, rate, (t) => ((t * 200) % 1 < 0.3 ? 12 : 0.2), 0.05);
    const m = measure({ values: v, sampleRateHz: rate });
    expect(m.dutyCyclePct!).toBeGreaterThan(29.5);
    expect(m.dutyCyclePct!).toBeLessThan(30.5);
    // state levels by the histogram method (IEEE Std 181-2011): the two plateaus
    expect(m.baseLevel).toBeCloseTo(0.2, 1);
    expect(m.topLevel).toBeCloseTo(12, 1);
  });

  it("rise and fall time: linear edges (10–90 % = 0.8 × edge), first-order edges (τ·ln 9)", () => {
    const rate = 1_000_000;
    const edge = 100e-6;
    // trapezoid: 100 µs ramps, geometry gives 10–90 % = 80 µs
    const trap = (t: number) => {
      const u = (t * 500) % 1; // 2 ms period
      const tt = u * 2e-3;
      if (tt < edge) return tt / edge;
      if (tt < 1e-3) return 1;
      if (tt < 1e-3 + edge) return 1 - (tt - 1e-3) / edge;
      return 0;
    };
    const m = measure({ values: wave(20_000, rate, trap), sampleRateHz: rate });
    expect(m.riseTimeS!).toBeCloseTo(0.8 * edge, 6);
    expect(m.fallTimeS!).toBeCloseTo(0.8 * edge, 6);
    // RC charging v = 1 − e^(−t/τ): 10 % at τ·ln(10/9), 90 % at τ·ln 10 → τ·ln 9 (circuit theory)
    const tau = 20e-6;
    const rc = (t: number) => {
      const tt = ((t * 1000) % 1) * 1e-3; // 1 ms period, half high
      return tt < 0.5e-3 ? 1 - Math.exp(-tt / tau) : Math.exp(-(tt - 0.5e-3) / tau) * (1 - Math.exp(-0.5e-3 / tau));
    };
    const m2 = measure({ values: wave(20_000, rate, rc), sampleRateHz: rate });
    expect(Math.abs(m2.riseTimeS! - tau * Math.log(9)) / (tau * Math.log(9))).toBeLessThan(0.02);
    expect(Math.abs(m2.fallTimeS! - tau * Math.log(9)) / (tau * Math.log(9))).toBeLessThan(0.02);
  });

  it("measures a window only", () => {
    const rate = 10_000;
    // 100 Hz for the first second, 250 Hz after it
    const v = wave(20_000, rate, (t) => (t < 1 ? Math.sin(2 * Math.PI * 100 * t) : Math.sin(2 * Math.PI * 250 * t)));
    const a = measure({ values: v, sampleRateHz: rate }, { endS: 0.999 });
    const b = measure({ values: v, sampleRateHz: rate }, { startS: 1.001 });
    expect(a.frequencyHz!).toBeCloseTo(100, 0);
    expect(b.frequencyHz!).toBeCloseTo(250, 0);
    expect(b.startS).toBeGreaterThanOrEqual(1.001);
    // a sine's rise time 10–90 %: 2·asin(0.8)/(2πf) (trigonometry)
    expect(a.riseTimeS!).toBeCloseTo((2 * Math.asin(0.8)) / (2 * Math.PI * 100), 4);
  });

  it("a flat signal has no frequency", () => {
    const m = measure({ values: new Float32Array(100).fill(3), sampleRateHz: 1000 });
    expect(m.frequencyHz).toBeNull();
    expect(m.peakToPeak).toBe(0);
    expect(m.rms).toBeCloseTo(3, 9);
  });
});
