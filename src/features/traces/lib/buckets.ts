/** How much data to ask the server for. Pure. */
import { MAX_WINDOW_WIDTH } from "../../../../shared/schemas/traces";

export const BUCKETS_PER_PIXEL = 2;
/**
 * What the viewer asks for: one min/max bucket per CSS pixel of the plot. The band between each
 * bucket's minimum and maximum already holds every extreme of the samples under that pixel, so
 * nothing a pixel could show is lost, and a 390 px phone asks for a few hundred points.
 */
export const VIEW_BUCKETS_PER_PIXEL = 1;
/** the window endpoint's limit */
export const MAX_BUCKETS = MAX_WINDOW_WIDTH;
export const MIN_BUCKETS = 16;
/** widths are rounded up to this many px so that small resizes reuse the cached window */
export const WIDTH_QUANTUM_PX = 32;

/**
 * About two buckets per pixel of the plot width (a min/max pair per half pixel never loses a spike),
 * never more than the samples in the window (below that the server returns the samples themselves),
 * within [MIN_BUCKETS, MAX_BUCKETS].
 */
export function bucketsFor(plotWidthPx: number, samplesInWindow = Infinity, perPixel = BUCKETS_PER_PIXEL): number {
  const px = Math.max(1, Math.ceil(Math.max(plotWidthPx, 1) / WIDTH_QUANTUM_PX) * WIDTH_QUANTUM_PX);
  const cap = Number.isFinite(samplesInWindow) ? Math.max(2, Math.ceil(samplesInWindow)) : Infinity;
  const n = Math.min(Math.round(px * perPixel), cap, MAX_BUCKETS);
  return Math.max(n, Math.min(MIN_BUCKETS, cap));
}

export interface FetchWindow {
  t0: number;
  t1: number;
  width: number;
}

/**
 * The window to fetch for a view: the view widened by `pad` of its span on each side (so a short pan
 * shows data at once), clipped to the trace, with buckets so that the view itself gets `perPixel`
 * per pixel (two by default).
 * Returns null when the view does not overlap the trace.
 */
export function fetchWindowFor(
  view: { t0: number; t1: number },
  bounds: { start: number; end: number },
  plotWidthPx: number,
  sampleRateHz: number,
  pad = 0.25,
  perPixel = BUCKETS_PER_PIXEL,
): FetchWindow | null {
  const span = view.t1 - view.t0;
  if (!(span > 0)) return null;
  const t0 = Math.max(bounds.start, view.t0 - span * pad);
  const t1 = Math.min(bounds.end, view.t1 + span * pad);
  if (!(t1 > t0)) return null;
  const pxCovered = plotWidthPx * ((t1 - t0) / span);
  const samples = sampleRateHz > 0 ? (t1 - t0) * sampleRateHz + 1 : Infinity;
  return { t0, t1, width: bucketsFor(pxCovered, samples, perPixel) };
}

/**
 * Rounds a fetch window's ends to a grid of 1/64 of its span, so that redraws with float noise
 * and tiny pans map to the same query key.
 */
export function quantizeWindow(w: FetchWindow, bounds: { start: number; end: number }): FetchWindow {
  const span = w.t1 - w.t0;
  const q = 2 ** Math.floor(Math.log2(span / 64));
  if (!(q > 0) || !Number.isFinite(q)) return w;
  const eps = q * 1e-6;
  const t0 = Math.max(bounds.start, Math.floor((w.t0 + eps) / q) * q);
  const t1 = Math.min(bounds.end, Math.ceil((w.t1 - eps) / q) * q);
  return { t0, t1, width: w.width };
}
