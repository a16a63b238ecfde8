import { describe, expect, it } from "vitest";
import { decimateMinMax } from "../../../shared/trace/decimate";
import { generateSecondary } from "../../../demo/generators/secondary";
import { bandAt, traceLevelAt } from "../../../src/features/traces/lib/snap";
import { pinLevel } from "../../../src/features/traces/plot/pin-level";
import { placePointerLabel } from "../../../src/features/traces/lib/pointer-label";
import { firingFocus, firstEventLength } from "../../../src/features/traces/lib/overlay-focus";
import { windowParams } from "../../../src/features/traces/lib/window-params";
import { plotAreaWidth } from "../../../src/features/traces/plot/layout";
import type { TraceLayer } from "../../../src/features/traces/plot/model";

// A secondary-ignition capture from the project's generator (demo/generators/secondary.ts) with
// stated parameters: 1 MS/s, one firing at 750 rpm, firing line 0.8 V above the baseline, spark
// line 0.15 V for 1.5 ms, spark-line slope −0.01 V/ms, noise 2 mV RMS (generator defaults).
const g = generateSecondary({
  seed: 5,
  sampleRateHz: 1e6,
  events: 1,
  peakV: 0.8,
  burnLevelV: 0.15,
  burnTimeMs: 1.5,
  noiseV: 0.002,
});
const ev = g.truth.events[0];
const src = g.trace;
const layer = (t0: number, t1: number, width: number): TraceLayer => {
  const w = decimateMinMax(src, t0, t1, width);
  return {
    key: "t:0",
    traceId: "t",
    channel: src.channels[0].name,
    color: "#000",
    t: w.t,
    min: w.series[0].min,
    max: w.series[0].max,
  };
};

describe("pins stand on the trace (lib/snap, the pins layer)", () => {
  it("a pin on the spark line reads the spark line's level wherever it was clicked", () => {
    // the capture view: 10 ms across 700 px of buckets
    const l = layer(ev.timeS - 2e-3, ev.timeS + 8e-3, 700);
    const t = ev.timeS + 0.75e-3; // the middle of the 1.5 ms spark line
    // clicked near the top of the screen (5 V), near the bottom (−5 V): the same level, the spark
    // line's 0.15 V (generator) within its slope over a bucket and 3σ of the noise
    for (const near of [5, -5, 0.15]) expect(Math.abs(traceLevelAt(l, t, near)! - ev.burnLevel)).toBeLessThan(0.012);
  });

  it("a pin clicked near a firing line's top takes its peak: within the bucket it is squeezed into", () => {
    const l = layer(0, src.durationS, 400); // the whole capture in 400 buckets: the firing line is one bucket
    const v = traceLevelAt(l, ev.timeS, 10)!;
    // the peak above the baseline: 0.8 V (generator), the noise's 3σ either way
    expect(Math.abs(v - ev.peak)).toBeLessThan(0.01);
  });

  it("stays on the trace when zoomed: drawn from the data on screen at each zoom", () => {
    // stored at the peak (as clicked at the capture view), then zoomed in to sample resolution
    // around it and out to the whole capture: the dot's level is a value of the trace there
    const a = { traceId: "t", channel: null, t0: ev.timeS, level: ev.peak };
    const zoomedIn = layer(ev.timeS - 20e-6, ev.timeS + 20e-6, 800);
    const zoomedOut = layer(0, src.durationS, 300);
    const values = src.channels[0].values;
    const i = Math.round((ev.timeS - src.t0) * src.sampleRateHz);
    const local = [values[i - 1], values[i], values[i + 1]];
    const inLevel = pinLevel(a, [zoomedIn])!;
    expect(inLevel).toBeGreaterThanOrEqual(Math.min(...local) - 1e-6);
    expect(inLevel).toBeLessThanOrEqual(Math.max(...local) + 1e-6);
    expect(Math.abs(pinLevel(a, [zoomedOut])! - ev.peak)).toBeLessThan(0.01);
    // a level far from the trace (a stale click height) is never drawn: the trace's value is
    const stale = { ...a, t0: ev.timeS + 0.75e-3, level: 4 };
    expect(Math.abs(pinLevel(stale, [zoomedOut])! - ev.burnLevel)).toBeLessThan(0.012);
  });

  it("is null (the stored level is used) where no data reaches", () => {
    const l = layer(ev.timeS, ev.timeS + 1e-3, 100);
    expect(bandAt(l, ev.timeS - 1e-3)).toBeNull();
    expect(pinLevel({ traceId: "t", channel: null, t0: ev.timeS - 1e-3, level: 0.42 }, [l])).toBe(0.42);
  });
});

describe("a pointer's name label never covers the trace (lib/pointer-label)", () => {
  const plot = { left: 0, top: 0, right: 400, bottom: 200 };
  // rectangles overlap when their ranges overlap on both axes (plane geometry)
  const overlaps = (b: { y: number; h: number }, band: { top: number; bottom: number }) =>
    b.y < band.bottom && b.y + b.h > band.top;

  it("goes above or below the band under its columns, inside the plot", () => {
    for (const band of [
      { top: 90, bottom: 110 },
      { top: 20, bottom: 150 },
      { top: 60, bottom: 190 },
    ]) {
      for (const py of [30, 100, 170]) {
        const at = placePointerLabel(200, py, 80, 16, plot, () => band);
        expect(at.overlaps).toBe(false);
        expect(overlaps(at, band)).toBe(false);
        expect(at.y).toBeGreaterThanOrEqual(plot.top);
        expect(at.y + at.h).toBeLessThanOrEqual(plot.bottom);
      }
    }
  });

  it("takes the nearest clear place to the pointer; beside it where no trace runs", () => {
    // pointer at 100 px, band 90–110: just below the band (114) is nearer than just above (70)
    expect(placePointerLabel(200, 120, 80, 16, plot, () => ({ top: 90, bottom: 110 })).y).toBe(114);
    // no trace under the label's columns: right beside the pointer (8 px right, 6 px down)
    expect(placePointerLabel(200, 100, 80, 16, plot, () => null)).toMatchObject({ x: 208, y: 106, overlaps: false });
    // against the right edge it flips to the pointer's left
    expect(placePointerLabel(380, 100, 80, 16, plot, () => null).x).toBe(292);
  });

  it("says so when the band fills the plot's height (nowhere clear)", () => {
    expect(placePointerLabel(200, 100, 80, 16, plot, () => ({ top: -5, bottom: 205 })).overlaps).toBe(true);
  });
});

describe("the overlay opens on the firing events (lib/overlay-focus)", () => {
  it("spans the longest burn and as much again, the firing 15 % into the screen, in ten 1-2-5 divisions", () => {
    // 1.5 ms burns (and a 0.75 ms odd one): 2 × 1.5 / 0.85 = 3.53 ms wanted → 0.353 ms/div → the
    // next 1-2-5 step, 0.5 ms/div (a scope's timebase steps, common practice) → 5 ms, from −0.75 ms
    const w = firingFocus([1.5e-3, 0.75e-3, 1.5e-3], 0.1)!;
    expect(w.t1 - w.t0).toBeCloseTo(5e-3, 12);
    expect(w.t0).toBeCloseTo(-0.75e-3, 12);
    // the odd coil's 0.75 ms burn then fills 15 % of the plot; at the capture's 10 ms/div, 0.75 %
    expect(0.75e-3 / (w.t1 - w.t0)).toBeCloseTo(0.15, 6);
  });

  it("reads the length from the analysis: spark line end, else burn time, else pulse width", () => {
    expect(firstEventLength({ events: [{ timeS: 0.005, sparkEndS: 0.0065, burnTimeMs: 9 }] })).toBeCloseTo(1.5e-3, 12);
    expect(firstEventLength({ events: [{ timeS: 0.005, burnTimeMs: 0.75 }] })).toBeCloseTo(0.75e-3, 12);
    expect(firstEventLength({ events: [{ timeS: 0.005, pulseWidthMs: 3 }] })).toBeCloseTo(3e-3, 12);
    expect(firstEventLength({ events: [] })).toBeNull();
    expect(firingFocus([null, null], 0.1)).toBeNull();
    // never wider than the capture view
    expect(firingFocus([40e-3], 0.05)).toBeNull();
  });
});

describe("a chart asks for its window at its plot's width", () => {
  it("a 390 px phone's plot asks for a few hundred points, not 768–1344", () => {
    // the live plot on a phone runs the screen's 390 px; its plot area is 390 − 60 (level axis) −
    // 28 (right padding) = 302 px; the view plus a quarter either side covers 453 px, rounded up
    // to 32 px: 480 buckets, one per pixel (hand-computed)
    expect(plotAreaWidth(390)).toBe(302);
    const trace = {
      id: "t",
      name: "t",
      samples: 100_000,
      sampleRateHz: 1e6,
      durationS: 0.1,
      t0: 0,
      channels: [],
      settings: { voltsPerDiv: 1, timePerDivS: 0.001 },
    };
    const p = windowParams(trace, 0, { t0: 0.04, t1: 0.05 }, plotAreaWidth(390))!;
    expect(p.width).toBe(480);
    expect(p.width).toBeLessThan(768);
  });
});
