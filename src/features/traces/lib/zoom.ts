/** Zoom and pan maths on a time window. Pure; times in seconds. */

export interface Span {
  t0: number;
  t1: number;
}

export interface ZoomLimits {
  /** the data's extent; panning keeps the window overlapping it */
  start: number;
  end: number;
  /** narrowest allowed window (e.g. a few sample intervals) */
  minSpan: number;
  /** widest allowed window */
  maxSpan: number;
}

/** Limits for a trace: down to 8 samples across the screen, out to twice its length or the capture view. */
export function zoomLimits(start: number, end: number, sampleRateHz: number, captureSpan: number): ZoomLimits {
  const dt = sampleRateHz > 0 ? 1 / sampleRateHz : (end - start) / 1000 || 1e-6;
  const length = Math.max(end - start, 0);
  return { start, end, minSpan: 8 * dt, maxSpan: Math.max(2 * length, captureSpan, 16 * dt) };
}

/**
 * Keeps a window's span within [minSpan, maxSpan] (about its centre) and its position so that at
 * least a quarter of it still shows data: one can pan a little past either end but never get lost.
 */
export function clampWindow(w: Span, lim: ZoomLimits): Span {
  let span = w.t1 - w.t0;
  const centre = (w.t0 + w.t1) / 2;
  if (!Number.isFinite(span) || !Number.isFinite(centre)) return { t0: lim.start, t1: lim.start + lim.maxSpan };
  span = Math.min(Math.max(span, lim.minSpan), lim.maxSpan);
  const keep = span / 4;
  let t0 = centre - span / 2;
  const lo = lim.start - span + keep;
  const hi = lim.end - keep;
  if (hi >= lo) t0 = Math.min(Math.max(t0, lo), hi);
  return { t0, t1: t0 + span };
}

/**
 * Zoom by `factor` about time `at` (factor < 1 zooms in): the time under the pointer stays under it.
 */
export function zoomAround(w: Span, factor: number, at: number): Span {
  return { t0: at - (at - w.t0) * factor, t1: at + (w.t1 - at) * factor };
}

/** Zoom about the window's centre. */
export function zoomCentre(w: Span, factor: number): Span {
  return zoomAround(w, factor, (w.t0 + w.t1) / 2);
}

/** Shift the window by a fraction of its span (positive = later). */
export function panBy(w: Span, fraction: number): Span {
  const d = (w.t1 - w.t0) * fraction;
  return { t0: w.t0 + d, t1: w.t1 + d };
}

/** Shift the window by a pixel drag: dragging right by dx pixels moves the view earlier. */
export function panByPixels(w: Span, dxPx: number, plotWidthPx: number): Span {
  if (plotWidthPx <= 0) return w;
  return panBy(w, -dxPx / plotWidthPx);
}

/** Pixel (0 … width, relative to the plot area) → time. */
export function pxToTime(w: Span, px: number, plotWidthPx: number): number {
  return w.t0 + (px / plotWidthPx) * (w.t1 - w.t0);
}

/** A drag selection between two pixels → the window it selects (order-independent). */
export function selectionToWindow(w: Span, pxA: number, pxB: number, plotWidthPx: number): Span {
  const a = pxToTime(w, Math.max(0, Math.min(pxA, pxB)), plotWidthPx);
  const b = pxToTime(w, Math.min(plotWidthPx, Math.max(pxA, pxB)), plotWidthPx);
  return { t0: a, t1: b };
}

/** Wheel delta (pixels, as in WheelEvent.deltaY with deltaMode 0) → zoom factor; up zooms in. */
export function wheelFactor(deltaY: number, deltaMode = 0): number {
  const px = deltaMode === 1 ? deltaY * 16 : deltaMode === 2 ? deltaY * 400 : deltaY;
  const clamped = Math.max(-300, Math.min(300, px));
  return Math.exp(clamped * 0.002);
}

/** Pinch: the window at the start of the gesture, the finger distance then and now, and the centre pixel. */
export function pinchWindow(start: Span, d0: number, d1: number, centrePx: number, plotWidthPx: number): Span {
  if (d0 <= 0 || d1 <= 0) return start;
  const at = pxToTime(start, centrePx, plotWidthPx);
  return zoomAround(start, d0 / d1, at);
}

export function sameWindow(a: Span | null | undefined, b: Span | null | undefined, rel = 1e-9): boolean {
  if (!a || !b) return a === b;
  const tol = Math.max(Math.abs(a.t1 - a.t0), Math.abs(b.t1 - b.t0)) * rel;
  return Math.abs(a.t0 - b.t0) <= tol && Math.abs(a.t1 - b.t1) <= tol;
}
