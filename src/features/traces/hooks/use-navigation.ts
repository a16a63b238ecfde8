import { useCallback, useMemo, useState } from "react";
import type { Annotation, TraceInfo, ViewWindow } from "../types";
import { captureView, PRE_TRIGGER_FRACTION, traceBounds, unionRange, type CaptureView } from "../lib/capture-view";
import { clampWindow, sameWindow, zoomLimits, type Span, type ZoomLimits } from "../lib/zoom";
import { jumpWindow } from "../lib/overlay-geometry";
import { firingFocus, firstEventLength } from "../lib/overlay-focus";
import type { ChannelUnits } from "../../../lib/trace-units";
import type { Alignment } from "./use-alignment";
import { useFrameThrottle } from "./use-frame-throttle";

export interface NavigationInput {
  traces: TraceInfo[];
  overlay: boolean;
  /** overlay: the traces not hidden */
  hidden: Set<string>;
  /** the trace open first in single mode (the flagged one), else the first */
  defaultTraceId?: string;
  alignment: Alignment;
  offsets: Record<string, number>;
  cuOf: (traceId: string | undefined, channel?: string | null) => ChannelUnits;
  /** follow mode: the window the other side shares, in the own time of its trace */
  viewWindow: ViewWindow | null;
  onViewChange?: (w: ViewWindow) => void;
}

export interface Navigation {
  active: TraceInfo | undefined;
  /** the traces on the plot: the active one, or the overlay's shown ones */
  shown: TraceInfo[];
  /** the trace whose time and unit the plot's axes read */
  reference: TraceInfo | undefined;
  view: Span;
  cap: CaptureView | null;
  limits: ZoomLimits;
  applyView: (w: Span) => void;
  selectTrace: (id: string) => void;
  jumpTo: (a: Annotation) => void;
  toCapture: () => void;
}

/** The capture view in display time: an overlay shares one level axis and puts its alignment at 0. */
function displayCapture(
  reference: TraceInfo | undefined,
  overlay: boolean,
  shown: TraceInfo[],
  alignment: Alignment,
  cuOf: NavigationInput["cuOf"],
): CaptureView | null {
  if (!reference) return null;
  const c = captureView(reference, cuOf(reference.id));
  if (!overlay) return c;
  const span = c.t1 - c.t0;
  const aligned = alignment[reference.id]?.source !== "start";
  const t0 = aligned ? -PRE_TRIGGER_FRACTION * span : 0;
  const y = unionRange(shown.map((t) => captureView(t, cuOf(t.id))));
  return { ...c, t0, t1: t0 + span, vMin: y.vMin, vMax: y.vMax, triggerTimeS: aligned ? 0 : null };
}

function limitsOf(
  list: TraceInfo[],
  offsets: Record<string, number>,
  overlay: boolean,
  cap: CaptureView | null,
): ZoomLimits {
  let start = Infinity;
  let end = -Infinity;
  let sr = 0;
  for (const t of list) {
    const b = traceBounds(t);
    const off = overlay ? (offsets[t.id] ?? 0) : 0;
    start = Math.min(start, b.start - off);
    end = Math.max(end, b.end - off);
    sr = Math.max(sr, t.sampleRateHz);
  }
  if (!Number.isFinite(start)) return zoomLimits(0, 1, 1000, 1);
  return zoomLimits(start, end, sr, cap ? cap.t1 - cap.t0 : end - start);
}

/** What the viewer opens at: the capture view, or an overlay zoomed on the firing events. */
function openingOf(cap: CaptureView | null, overlay: boolean, shown: TraceInfo[]): Span | null {
  if (!cap) return null;
  const focus =
    overlay && cap.triggerTimeS === 0
      ? firingFocus(
          shown.map((t) => firstEventLength(t.analysis)),
          cap.t1 - cap.t0,
        )
      : null;
  return focus ?? { t0: cap.t0, t1: cap.t1 };
}

/**
 * Which trace is open and which window of it is shown: the opening window, zoom and pan (clamped),
 * trace switches, jumps to a mark (on another trace too), and follow mode (the other side's window,
 * applied whenever it changes). User changes are reported through onViewChange; following and
 * opening are not.
 */
export function useNavigation(inp: NavigationInput): Navigation {
  const { traces, overlay, hidden, alignment, offsets, cuOf, viewWindow: vw } = inp;
  const [chosen, setChosen] = useState<string | undefined>(inp.defaultTraceId ?? traces[0]?.id);
  const active = traces.find((t) => t.id === chosen) ?? traces[0];
  const shown = useMemo(
    () => (overlay ? traces.filter((t) => !hidden.has(t.id)) : active ? [active] : []),
    [overlay, traces, hidden, active],
  );
  const reference = overlay ? (shown[0] ?? traces[0]) : active;
  const cap = useMemo(
    () => displayCapture(reference, overlay, shown, alignment, cuOf),
    [reference, overlay, shown, alignment, cuOf],
  );
  const limits = useMemo(
    () => limitsOf(shown.length ? shown : reference ? [reference] : [], offsets, overlay, cap),
    [shown, reference, offsets, overlay, cap],
  );
  const opening = openingOf(cap, overlay, shown);

  const [view, setView] = useState<Span>(() => opening ?? { t0: 0, t1: 1 });
  const captureKey = overlay ? "o:" + traces.map((t) => t.id).join(",") : "s:" + (active?.id ?? "");
  const followKey = vw ? `${vw.traceId}|${vw.t0}|${vw.t1}|${overlay ? (offsets[vw.traceId] ?? "") : ""}` : "";
  const [seen, setSeen] = useState({ capture: captureKey, follow: "" });
  // follow mode and a changed set of traces are applied while rendering (no extra frame, no effect)
  if (seen.capture !== captureKey || seen.follow !== followKey) {
    const next = { capture: captureKey, follow: followKey };
    let w: Span | null = null;
    if (vw && seen.follow !== followKey && traces.some((t) => t.id === vw.traceId)) {
      if (!overlay && vw.traceId !== active?.id) {
        setChosen(vw.traceId);
        next.capture = "s:" + vw.traceId;
      }
      const off = overlay ? (offsets[vw.traceId] ?? 0) : 0;
      w = { t0: vw.t0 - off, t1: vw.t1 - off };
    } else if (seen.capture !== captureKey) w = opening;
    setSeen(next);
    if (w) setView(w);
  }

  const emit = useFrameThrottle<ViewWindow>(inp.onViewChange);
  const emitFor = useCallback(
    (traceId: string | undefined, w: Span) => {
      if (!traceId) return;
      const off = overlay ? (offsets[traceId] ?? 0) : 0;
      emit({ traceId, t0: w.t0 + off, t1: w.t1 + off });
    },
    [emit, overlay, offsets],
  );
  const applyView = useCallback(
    (w: Span) => {
      const next = clampWindow(w, limits);
      setView((prev) => (sameWindow(prev, next, 1e-12) ? prev : next));
      emitFor(reference?.id, next);
    },
    [limits, emitFor, reference],
  );

  /** Opens another trace (single mode) at `window` (default: its capture view). */
  const open = (id: string, window?: Span) => {
    const t = traces.find((x) => x.id === id);
    if (!t) return;
    const c = captureView(t, cuOf(t.id));
    const w = window ?? { t0: c.t0, t1: c.t1 };
    setChosen(id);
    setSeen((s) => ({ ...s, capture: "s:" + id }));
    setView(w);
    // a trace switch by the user is a view change, unless the view follows the other side's
    if (!vw || window) emitFor(id, w);
  };

  const jumpTo = (a: Annotation) => {
    if (!cap) return;
    const capSpan = cap.t1 - cap.t0;
    if (!overlay && a.traceId !== active?.id) {
      const t = traces.find((x) => x.id === a.traceId);
      const span = t ? captureView(t, cuOf(t.id)) : cap;
      return open(a.traceId, jumpWindow(a, span.t1 - span.t0, span.t1 - span.t0));
    }
    const s = overlay ? (offsets[a.traceId] ?? 0) : 0;
    applyView(
      jumpWindow({ kind: a.kind, t0: a.t0 - s, t1: a.t1 == null ? a.t1 : a.t1 - s }, view.t1 - view.t0, capSpan),
    );
  };

  return {
    active,
    shown,
    reference,
    view,
    cap,
    limits,
    applyView,
    selectTrace: (id) => open(id),
    jumpTo,
    toCapture: () => cap && applyView({ t0: cap.t0, t1: cap.t1 }),
  };
}
