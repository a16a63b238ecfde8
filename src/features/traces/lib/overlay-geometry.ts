/** Geometry of what the viewer draws over the plot (events, annotations, cursors), and hit tests. Pure. */
import type { Annotation, TraceAnalysis } from "../types";
import type { CursorPositions } from "./readout";
import { toPhysical, type ChannelUnits } from "../../../lib/trace-units";

/**
 * A value of the analysis, in `analysis.unit`, in the channel's physical unit on the plot (shared
 * unit model: kV at the plug, amperes through a clamp, else volts). (Sign and baseline are not
 * applied here: see eventMarkers.)
 */
export function analysisToPlot(value: number, analysis: Pick<TraceAnalysis, "unit">, cu: ChannelUnits): number {
  return toPhysical(value, analysis.unit, cu);
}

/** An inverted capture (firing lines below the baseline): summary.polarity or the `inverted` finding. */
export function isInverted(analysis: Pick<TraceAnalysis, "summary" | "findings">): boolean {
  return analysis.summary?.polarity === "negative" || (analysis.findings ?? []).some((f) => f.code === "inverted");
}

export interface EventMarker {
  /** firing line, display time */
  tFire: number;
  /** top of the firing line in the physical unit, when the analysis gives the peak */
  peakLevel: number | null;
  /** spark line start and end (display time) */
  tStart: number | null;
  tEnd: number | null;
  /** spark line level in the physical unit */
  burnLevel: number | null;
  burnTimeMs: number | null;
}

const finite = (x: unknown): x is number => typeof x === "number" && Number.isFinite(x);

/**
 * Event markers of a trace, shifted by the overlay offset (display time = trace time − offset).
 * Secondary ignition reports peak and burn level as magnitudes above the baseline: on the plot they
 * sit at baseline ± value (minus for an inverted capture). Other kinds get the time tick only.
 */
export function eventMarkers(analysis: TraceAnalysis | null | undefined, cu: ChannelUnits, offset = 0): EventMarker[] {
  if (!analysis?.events?.length) return [];
  const ignition = analysis.kind === "secondary-ignition";
  const baseValue = finite(analysis.baseline)
    ? analysis.baseline
    : finite(analysis.summary?.baseline)
      ? analysis.summary.baseline
      : 0;
  const baseline = analysisToPlot(baseValue, analysis, cu);
  const sign = isInverted(analysis) ? -1 : 1;
  const level = (v: unknown) => (ignition && finite(v) ? baseline + sign * analysisToPlot(v, analysis, cu) : null);
  return analysis.events
    .filter((e) => finite(e.timeS))
    .map((e) => {
      const burnMs = ignition && finite(e.burnTimeMs) && e.burnTimeMs > 0 ? e.burnTimeMs : null;
      const start = ignition ? (finite(e.sparkStartS) ? e.sparkStartS : burnMs != null ? e.timeS : null) : null;
      const end = ignition
        ? finite(e.sparkEndS)
          ? e.sparkEndS
          : burnMs != null
            ? e.timeS + burnMs / 1000
            : null
        : null;
      return {
        tFire: e.timeS - offset,
        peakLevel: level(e.peak),
        tStart: start == null ? null : start - offset,
        tEnd: end == null ? null : end - offset,
        burnLevel: level(e.burnLevel),
        burnTimeMs: burnMs,
      };
    });
}

/** Maps values to pixels inside the plot area (any pixel unit, as long as it is consistent). */
export interface PlotFrame {
  left: number;
  top: number;
  width: number;
  height: number;
  x: (t: number) => number;
  y: (v: number) => number;
}

export interface AnnotationShape {
  id: string;
  kind: Annotation["kind"];
  /** x of the mark (pin, note, span start) */
  x0: number;
  x1: number | null;
  /** y of the dot (pin) or the line (level) */
  y: number | null;
  /** flag box of a note, or label anchor */
  flag: { x: number; y: number; w: number; h: number } | null;
}

export const NOTE_FLAG = { w: 16, h: 12, pole: 22 };

/** Pixel shapes of annotations (times already in display time). */
export function annotationShapes(annotations: Annotation[], f: PlotFrame, scale = 1): AnnotationShape[] {
  return annotations.map((a) => {
    const x0 = f.x(a.t0);
    const x1 = a.kind === "span" && a.t1 != null ? f.x(a.t1) : null;
    const y = a.level != null && (a.kind === "pin" || a.kind === "level") ? f.y(a.level) : null;
    const flag = a.kind === "note" ? { x: x0, y: f.top, w: NOTE_FLAG.w * scale, h: NOTE_FLAG.h * scale } : null;
    return { id: a.id, kind: a.kind, x0, x1, y, flag };
  });
}

/**
 * The annotation under a pixel, nearest first: a level's line, a pin's line or dot, a note's flag
 * (all within `tol`), then a span's range. Returns its id or null.
 */
export function hitTestAnnotations(
  shapes: AnnotationShape[],
  px: number,
  py: number,
  f: PlotFrame,
  tol: number,
): string | null {
  let best: { id: string; d: number } | null = null;
  const consider = (id: string, d: number) => {
    if (d <= tol && (!best || d < best.d)) best = { id, d };
  };
  for (const s of shapes) {
    if (s.kind === "level" && s.y != null) consider(s.id, Math.abs(py - s.y));
    else if (s.kind === "pin") {
      consider(s.id, Math.abs(px - s.x0));
      if (s.y != null) consider(s.id, Math.hypot(px - s.x0, py - s.y) * 0.8);
    } else if (s.kind === "note" && s.flag) {
      const inX = px >= s.flag.x - tol && px <= s.flag.x + s.flag.w + tol;
      const inY = py >= s.flag.y - tol && py <= s.flag.y + NOTE_FLAG.pole + tol;
      if (inX && inY) consider(s.id, Math.abs(px - s.x0) * 0.5);
    }
  }
  if (best) return (best as { id: string }).id;
  for (const s of shapes) {
    if (s.kind === "span" && s.x1 != null) {
      const lo = Math.min(s.x0, s.x1);
      const hi = Math.max(s.x0, s.x1);
      if (px >= lo && px <= hi && py >= f.top && py <= f.top + f.height) return s.id;
    }
  }
  return null;
}

export type CursorHandle = "ta" | "tb" | "va" | "vb";

/** Which cursor line is under a pixel (time cursors first), within `tol`. */
export function hitTestCursors(
  c: CursorPositions,
  px: number,
  py: number,
  f: PlotFrame,
  tol: number,
): CursorHandle | null {
  const cands: { h: CursorHandle; d: number }[] = [
    { h: "ta", d: Math.abs(px - f.x(c.ta)) },
    { h: "tb", d: Math.abs(px - f.x(c.tb)) },
    { h: "va", d: Math.abs(py - f.y(c.va)) + 0.01 },
    { h: "vb", d: Math.abs(py - f.y(c.vb)) + 0.01 },
  ];
  const hit = cands.filter((x) => x.d <= tol).sort((a, b) => a.d - b.d)[0];
  return hit ? hit.h : null;
}

/**
 * The window that shows an annotation: a span with a quarter of its length either side; a point
 * mark (pin, note, level) centred, at the current zoom or the capture view's span if narrower.
 */
export function jumpWindow(
  a: Pick<Annotation, "kind" | "t0" | "t1">,
  currentSpan: number,
  captureSpan: number,
): { t0: number; t1: number } {
  if (a.kind === "span" && a.t1 != null && a.t1 !== a.t0) {
    const lo = Math.min(a.t0, a.t1);
    const hi = Math.max(a.t0, a.t1);
    const pad = (hi - lo) / 4;
    return { t0: lo - pad, t1: hi + pad };
  }
  const span = Math.min(currentSpan > 0 ? currentSpan : captureSpan, captureSpan > 0 ? captureSpan : currentSpan);
  return { t0: a.t0 - span / 2, t1: a.t0 + span / 2 };
}

/** Marker for a level outside the visible range: which edge to point at. */
export function edgeMarker(v: number, vMin: number, vMax: number): "in" | "above" | "below" {
  return v > vMax ? "above" : v < vMin ? "below" : "in";
}
