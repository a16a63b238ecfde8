import { describe, expect, it } from "vitest";
import { bucketsFor, fetchWindowFor, quantizeWindow } from "../../../src/features/traces/lib/buckets";
import {
  clampWindow,
  panBy,
  panByPixels,
  pinchWindow,
  pxToTime,
  sameWindow,
  selectionToWindow,
  wheelFactor,
  zoomAround,
  zoomCentre,
  zoomLimits,
} from "../../../src/features/traces/lib/zoom";

describe("zoom and pan (hand-computed examples)", () => {
  it("zooming ×0.5 about t = 2 in 0…10 gives 1…6 and keeps t = 2 at 20 % across", () => {
    const w = zoomAround({ t0: 0, t1: 10 }, 0.5, 2);
    expect(w).toEqual({ t0: 1, t1: 6 });
    expect((2 - w.t0) / (w.t1 - w.t0)).toBeCloseTo(0.2, 12);
    expect(zoomCentre({ t0: 0, t1: 10 }, 2)).toEqual({ t0: -5, t1: 15 });
  });

  it("pans by a fraction of the span and by pixels (dragging right shows earlier times)", () => {
    expect(panBy({ t0: 0, t1: 10 }, 0.1)).toEqual({ t0: 1, t1: 11 });
    expect(panByPixels({ t0: 0, t1: 10 }, 50, 500)).toEqual({ t0: -1, t1: 9 });
  });

  it("maps pixels to time and a drag selection to a window in either direction", () => {
    expect(pxToTime({ t0: 0, t1: 10 }, 125, 500)).toBe(2.5);
    expect(selectionToWindow({ t0: 0, t1: 10 }, 400, 100, 500)).toEqual({ t0: 2, t1: 8 });
    // a drag past the plot's edges stops at them
    expect(selectionToWindow({ t0: 0, t1: 10 }, -20, 600, 500)).toEqual({ t0: 0, t1: 10 });
  });

  it("wheel up zooms in, wheel down zooms out by the reciprocal factor", () => {
    expect(wheelFactor(-100)).toBeLessThan(1);
    expect(wheelFactor(100)).toBeGreaterThan(1);
    expect(wheelFactor(100) * wheelFactor(-100)).toBeCloseTo(1, 12);
    // line mode (deltaMode 1) counts 16 px per line
    expect(wheelFactor(3, 1)).toBeCloseTo(wheelFactor(48), 12);
  });

  it("pinching the fingers twice as far apart about the centre halves the span", () => {
    expect(pinchWindow({ t0: 0, t1: 10 }, 100, 200, 250, 500)).toEqual({ t0: 2.5, t1: 7.5 });
  });

  it("clamps the span and keeps a quarter of the window over the data", () => {
    // 1 MS/s trace of 10 ms: narrowest window 8 samples = 8 µs, widest 20 ms (twice the length)
    const lim = zoomLimits(0, 0.01, 1e6, 0.01);
    expect(lim.minSpan).toBeCloseTo(8e-6, 15);
    expect(lim.maxSpan).toBeCloseTo(0.02, 15);
    const narrow = clampWindow({ t0: 0.005, t1: 0.005 + 1e-7 }, lim);
    expect(narrow.t1 - narrow.t0).toBeCloseTo(8e-6, 15);
    expect((narrow.t0 + narrow.t1) / 2).toBeCloseTo(0.005 + 0.5e-7, 12);
    const wide = clampWindow({ t0: -1, t1: 1 }, lim);
    expect(wide.t1 - wide.t0).toBeCloseTo(0.02, 12);
    // panned far past the end: stops with a quarter (1 ms of a 4 ms window) still on the data
    const late = clampWindow({ t0: 0.5, t1: 0.504 }, lim);
    expect(late.t0).toBeCloseTo(0.009, 12);
    expect(late.t1).toBeCloseTo(0.013, 12);
    const early = clampWindow({ t0: -0.5, t1: -0.496 }, lim);
    expect(early.t1).toBeCloseTo(0.001, 12);
  });

  it("compares windows with a relative tolerance", () => {
    expect(sameWindow({ t0: 0, t1: 1 }, { t0: 1e-12, t1: 1 })).toBe(true);
    expect(sameWindow({ t0: 0, t1: 1 }, { t0: 0.01, t1: 1 })).toBe(false);
  });
});

describe("buckets per pixel", () => {
  it("asks for about two buckets per pixel, widths rounded up to 32 px", () => {
    // 390 px phone plot → 416 px → 832 buckets (hand-computed)
    expect(bucketsFor(390)).toBe(832);
    expect(bucketsFor(800)).toBe(1600);
  });

  it("never asks for more buckets than samples in the window, nor more than the cap", () => {
    expect(bucketsFor(800, 100)).toBe(100);
    expect(bucketsFor(800, 1.5)).toBe(2);
    expect(bucketsFor(100_000)).toBe(8000);
  });

  it("fetches the view padded by a quarter each side, clipped to the trace, at two buckets per view pixel", () => {
    // view 1…2 s of a 0…10 s trace at 1 MS/s on 500 px: 0.75…2.25 s covers 750 px → 768 px → 1536
    const f = fetchWindowFor({ t0: 1, t1: 2 }, { start: 0, end: 10 }, 500, 1e6)!;
    expect(f.t0).toBeCloseTo(0.75, 12);
    expect(f.t1).toBeCloseTo(2.25, 12);
    expect(f.width).toBe(1536);
    const clipped = fetchWindowFor({ t0: -0.5, t1: 0.5 }, { start: 0, end: 10 }, 500, 1e6)!;
    expect(clipped.t0).toBe(0);
    expect(clipped.t1).toBeCloseTo(0.75, 12);
    expect(fetchWindowFor({ t0: 20, t1: 21 }, { start: 0, end: 10 }, 500, 1e6)).toBeNull();
  });

  it("quantizes fetch windows so that float noise maps to the same key", () => {
    const b = { start: 0, end: 10 };
    const a = quantizeWindow({ t0: 1.0000000001, t1: 2.0000000003, width: 100 }, b);
    const c = quantizeWindow({ t0: 1, t1: 2, width: 100 }, b);
    expect(a).toEqual(c);
    expect(a.t0).toBeLessThanOrEqual(1);
    expect(a.t1).toBeGreaterThanOrEqual(2);
  });
});
