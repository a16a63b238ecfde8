import { useCallback, useEffect, useMemo, useRef, useState, type KeyboardEvent, type ReactNode } from "react";
import { SCREEN_DIVISIONS_X, SCREEN_DIVISIONS_Y } from "../../../../shared/schemas/capture-settings";
import type { Annotation, AnnotationKind, LocalPointer, TraceInfo, TraceViewerProps } from "../types";
import { useTraceWindows } from "../api/get-trace-window";
import { useElementWidth } from "../hooks/use-element-width";
import { useDebouncedValue } from "../hooks/use-debounced-value";
import { useWindowData } from "../hooks/use-window-data";
import { captureView, fitRange, PRE_TRIGGER_FRACTION, traceBounds, unionRange } from "../lib/capture-view";
import { divisionStep } from "../lib/grid";
import { clampWindow, panBy, sameWindow, zoomCentre, zoomLimits, type Span } from "../lib/zoom";
import { cursorReadout, defaultCursors, perDivText, type CursorPositions } from "../lib/readout";
import { alignmentLevel, alignmentTime, refineWindow } from "../lib/alignment";
import { eventMarkers, jumpWindow } from "../lib/overlay-geometry";
import { bucketsFor } from "../lib/buckets";
import { channelUnits, formatLevel, formatTime, traceUnits, type ChannelUnits } from "../lib/units";
import { PLOT_COLORS, traceColor } from "../lib/palette";
import type { DrawModel, TraceLayer } from "../plot/draw";
import { PlotSurface, type MarkGesture } from "./plot-surface";
import { AnnotationList } from "./annotation-list";
import { MarkPrompt } from "./mark-prompt";
import {
  IconCaptureView,
  IconCursors,
  IconEvents,
  IconFitLevels,
  IconLevel,
  IconNote,
  IconPan,
  IconPin,
  IconSpan,
  IconZoomIn,
  IconZoomOut,
} from "./icons";

export type { TraceViewerProps } from "../types";

const TOOLS: { kind: AnnotationKind; key: string; label: string; icon: ReactNode }[] = [
  { kind: "pin", key: "p", label: "Pin", icon: <IconPin /> },
  { kind: "span", key: "s", label: "Span", icon: <IconSpan /> },
  { kind: "level", key: "l", label: "Level", icon: <IconLevel /> },
  { kind: "note", key: "n", label: "Note", icon: <IconNote /> },
];

const ALIGN_TEXT = { event: "aligned on its first firing", crossing: "aligned on its trigger crossing", start: "not aligned (no event or crossing found)" } as const;

/** Calls fn at most once per animation frame with the latest value. */
function useFrameThrottle<T>(fn: ((v: T) => void) | undefined) {
  const latest = useRef<{ v: T } | null>(null);
  const frame = useRef<number | null>(null);
  const fnRef = useRef(fn);
  fnRef.current = fn;
  useEffect(() => () => void (frame.current != null && cancelAnimationFrame(frame.current)), []);
  return useCallback((v: T) => {
    if (!fnRef.current) return;
    latest.current = { v };
    if (frame.current != null) return;
    frame.current = requestAnimationFrame(() => {
      frame.current = null;
      const l = latest.current;
      latest.current = null;
      if (l) fnRef.current?.(l.v);
    });
  }, []);
}

/**
 * The trace viewer: opens at the capture view (the technician's screen), then zoom, pan, cursors,
 * channel toggles, overlay of several traces aligned on their first firing, analysis event markers,
 * annotations, other participants' pointers and the expert's mark tools.
 */
export function TraceViewer(props: TraceViewerProps) {
  const { traces, annotations = [], pointers = [], readOnly = false, onCreateMark } = props;
  const overlay = props.mode === "overlay" && traces.length > 0;
  const canMark = !!onCreateMark && !readOnly;

  const [activeId, setActiveId] = useState<string | undefined>(traces[0]?.id);
  const active = traces.find((t) => t.id === activeId) ?? traces[0];
  const [hiddenTraces, setHiddenTraces] = useState<Set<string>>(() => new Set());
  const [hiddenChannels, setHiddenChannels] = useState<Set<string>>(() => new Set());
  const shown = useMemo(
    () => (overlay ? traces.filter((t) => !hiddenTraces.has(t.id)) : active ? [active] : []),
    [overlay, traces, hiddenTraces, active],
  );
  const reference: TraceInfo | undefined = overlay ? (shown[0] ?? traces[0]) : active;

  // ---- units: every level is shown in its channel's physical unit (shared/trace/units); the window
  // data, marks' levels and pointers travel in the file's unit and are scaled by `fromFile` here
  const unitsById = useMemo(() => new Map(traces.map((t) => [t.id, t.channels.map((_, j) => traceUnits(t, j))])), [traces]);
  const cuOf = useCallback(
    (id: string | undefined, channel?: string | null): ChannelUnits => {
      const t = traces.find((x) => x.id === id);
      const j = channel && t ? Math.max(0, t.channels.findIndex((c) => c.name === channel)) : 0;
      return (id ? unitsById.get(id)?.[j] : undefined) ?? channelUnits(null);
    },
    [traces, unitsById],
  );
  const refCu = cuOf(reference?.id);

  // ---- alignment (overlay): first event, else the first trigger crossing, found in coarse buckets
  // over the whole trace and then refined in a fine window around it
  const coarseParams = traces.map((t) => {
    if (!overlay || t.analysis?.events?.length) return null;
    const b = traceBounds(t);
    if (!(b.end > b.start)) return null;
    return { traceId: t.id, t0: b.start, t1: b.end, width: bucketsFor(2000, t.samples) };
  });
  const coarseResults = useTraceWindows(coarseParams);
  const coarseAlign = traces.map((t, i) => {
    const data = coarseResults[i]?.data;
    const level = data ? alignmentLevel(t, data, 1 / (unitsById.get(t.id)?.[0]?.scopeFromFile ?? 1)) : null;
    return { level, found: data ? alignmentTime(t, data, level) : null };
  });
  const fineParams = traces.map((t, i) => {
    const p = coarseParams[i];
    const c = coarseAlign[i];
    if (!p || c.found?.source !== "crossing") return null;
    const w = refineWindow(c.found.time, p, traceBounds(t));
    return { traceId: t.id, t0: w.t0, t1: w.t1, width: bucketsFor(500, (w.t1 - w.t0) * t.sampleRateHz + 1) };
  });
  const fineResults = useTraceWindows(fineParams);
  const alignStamp = traces.map((_, i) => `${coarseResults[i]?.dataUpdatedAt ?? 0}/${fineResults[i]?.dataUpdatedAt ?? 0}`).join(",");
  const alignment = useMemo(() => {
    const out: Record<string, { time: number; source: "event" | "crossing" | "start" }> = {};
    traces.forEach((t, i) => {
      if (!overlay) return void (out[t.id] = { time: 0, source: "start" });
      const coarse = coarseAlign[i].found ?? alignmentTime(t);
      const fineData = fineResults[i]?.data;
      const fine = fineData ? alignmentTime(t, fineData, coarseAlign[i].level) : null;
      out[t.id] = fine?.source === "crossing" ? fine : coarse;
    });
    return out;
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [overlay, traces, alignStamp]);
  const offsets = useMemo(() => Object.fromEntries(Object.entries(alignment).map(([k, v]) => [k, v.time])) as Record<string, number>, [alignment]);
  const offsetOf = (id: string | undefined) => (id ? (offsets[id] ?? 0) : 0);

  // ---- the capture view in display time
  const cap = useMemo(() => {
    if (!reference) return null;
    const c = captureView(reference, cuOf(reference.id));
    if (!overlay) return c;
    const span = c.t1 - c.t0;
    const aligned = alignment[reference.id]?.source !== "start";
    const t0 = aligned ? -PRE_TRIGGER_FRACTION * span : 0;
    const y = unionRange(shown.map((t) => captureView(t, cuOf(t.id))));
    return { ...c, t0, t1: t0 + span, vMin: y.vMin, vMax: y.vMax, triggerTimeS: aligned ? 0 : null };
  }, [reference, overlay, shown, alignment, cuOf]);

  const limits = useMemo(() => {
    const list = shown.length ? shown : reference ? [reference] : [];
    let start = Infinity;
    let end = -Infinity;
    let sr = 0;
    for (const t of list) {
      const b = traceBounds(t);
      const off = offsets[t.id] ?? 0;
      start = Math.min(start, b.start - (overlay ? off : 0));
      end = Math.max(end, b.end - (overlay ? off : 0));
      sr = Math.max(sr, t.sampleRateHz);
    }
    if (!Number.isFinite(start)) return zoomLimits(0, 1, 1000, 1);
    return zoomLimits(start, end, sr, cap ? cap.t1 - cap.t0 : end - start);
  }, [shown, reference, offsets, overlay, cap]);

  const [view, setViewState] = useState<Span>(() => (cap ? { t0: cap.t0, t1: cap.t1 } : { t0: 0, t1: 1 }));
  const emitView = useFrameThrottle<Span>((w) => {
    if (!reference || !props.onViewChange) return;
    const off = offsetOf(reference.id);
    props.onViewChange({ traceId: reference.id, t0: w.t0 + off, t1: w.t1 + off });
  });
  const applyView = useCallback(
    (w: Span, emit = true) => {
      const next = clampWindow(w, limits);
      setViewState((prev) => (sameWindow(prev, next, 1e-12) ? prev : next));
      if (emit) emitView(next);
    },
    [limits, emitView],
  );
  const toCapture = () => cap && applyView({ t0: cap.t0, t1: cap.t1 });

  // ---- follow mode and trace switches
  const captureKey = overlay ? "o:" + traces.map((t) => t.id).join(",") : "s:" + (active?.id ?? "");
  const vw = props.viewWindow ?? null;
  const followKey = vw ? `${vw.traceId}|${vw.t0}|${vw.t1}|${overlay ? (offsets[vw.traceId] ?? "") : ""}` : "";
  const lastKeys = useRef<{ capture?: string; follow?: string }>({});
  /** a jump to a mark on another trace (single mode), applied once that trace is shown */
  const pendingJump = useRef<{ traceId: string; window: Span } | null>(null);
  useEffect(() => {
    const first = lastKeys.current.capture === undefined;
    const keyChanged = lastKeys.current.capture !== captureKey;
    const followChanged = lastKeys.current.follow !== followKey;
    lastKeys.current = { capture: captureKey, follow: followKey };
    if (vw && (followChanged || keyChanged) && traces.some((t) => t.id === vw.traceId)) {
      if (!overlay && vw.traceId !== active?.id) {
        if (followChanged) setActiveId(vw.traceId);
      } else {
        const off = overlay ? offsetOf(vw.traceId) : 0;
        applyView({ t0: vw.t0 - off, t1: vw.t1 - off }, false);
        return;
      }
    }
    if (keyChanged && pendingJump.current && pendingJump.current.traceId === active?.id) {
      applyView(pendingJump.current.window);
      pendingJump.current = null;
      return;
    }
    // a trace switch by the user is a view change; opening the viewer is not
    if (keyChanged && cap) applyView({ t0: cap.t0, t1: cap.t1 }, !first && !vw);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [captureKey, followKey]);

  // ---- levels, cursors, tools
  const [fitLevels, setFitLevels] = useState(false);
  const [cursors, setCursors] = useState<CursorPositions | null>(null);
  const [tool, setTool] = useState<AnnotationKind | null>(null);
  const [panMode, setPanMode] = useState(false);
  const [showEvents, setShowEvents] = useState(props.highlightEvents ?? true);
  useEffect(() => setShowEvents(props.highlightEvents ?? true), [props.highlightEvents]);
  const [draft, setDraft] = useState<{ g: MarkGesture; traceId: string } | null>(null);
  useEffect(() => {
    if (!canMark) {
      setTool(null);
      setDraft(null);
    }
  }, [canMark]);

  // ---- layout and data
  const boxRef = useRef<HTMLDivElement>(null);
  const boxWidth = useElementWidth(boxRef, 600);
  const plotHeight = props.height ?? Math.round(Math.min(420, Math.max(240, boxWidth * 0.55)));
  const [plotArea, setPlotArea] = useState<{ left: number; top: number; width: number; height: number } | null>(null);
  const plotWidthPx = plotArea?.width ?? Math.max(60, boxWidth - 70);
  const fetchView = useDebouncedValue(view, 120, (a, b) => sameWindow(a, b));
  const windows = useWindowData(shown, overlay ? offsets : {}, fetchView, plotWidthPx);

  const levelUnit = refCu.unit;
  const channelNames = useMemo(() => {
    const names: string[] = [];
    for (const t of shown) for (const c of t.channels) if (!names.includes(c.name)) names.push(c.name);
    return names;
  }, [shown]);

  const layers = useMemo(() => {
    const out: TraceLayer[] = [];
    for (const t of shown) {
      const data = windows[t.id]?.data;
      if (!data) continue;
      const off = overlay ? (offsets[t.id] ?? 0) : 0;
      const ts = off === 0 ? data.t : data.t.map((x) => x - off);
      const idx = traces.indexOf(t);
      data.series.forEach((s, j) => {
        const name = s.name ?? t.channels[j]?.name ?? String(j);
        if (hiddenChannels.has(name)) return;
        const f = unitsById.get(t.id)?.[j]?.fromFile ?? 1;
        out.push({
          key: `${t.id}:${j}`,
          color: overlay ? traceColor(idx) : traceColor(Math.max(0, channelNames.indexOf(name))),
          t: ts,
          min: f === 1 ? s.min : s.min.map((x) => x * f),
          max: f === 1 ? s.max : s.max.map((x) => x * f),
          faint: overlay && j > 0,
        });
      });
    }
    return out;
  }, [shown, windows, overlay, offsets, traces, hiddenChannels, channelNames, unitsById]);

  const yRange = useMemo(() => {
    if (!cap) return { vMin: -1, vMax: 1 };
    if (!fitLevels) return { vMin: cap.vMin, vMax: cap.vMax };
    let lo = Infinity;
    let hi = -Infinity;
    for (const l of layers)
      for (let k = 0; k < l.t.length; k++) {
        if (l.t[k] < view.t0 || l.t[k] > view.t1) continue;
        if (Number.isFinite(l.min[k])) lo = Math.min(lo, l.min[k]);
        if (Number.isFinite(l.max[k])) hi = Math.max(hi, l.max[k]);
      }
    return Number.isFinite(lo) ? fitRange(lo, hi) : { vMin: cap.vMin, vMax: cap.vMax };
  }, [cap, fitLevels, layers, view.t0, view.t1]);

  const span = view.t1 - view.t0;
  // at the capture's own time/division the lines are the screen's divisions; zoomed, round values
  const xStep = divisionStep(span, cap?.timePerDivS ?? 0, SCREEN_DIVISIONS_X);
  const xGrid = { step: xStep, anchor: cap && xStep === cap.timePerDivS ? cap.t0 : 0 };
  const ySpan = yRange.vMax - yRange.vMin;
  const yGrid = {
    step: divisionStep(ySpan, fitLevels ? 0 : (cap?.voltsPerDiv ?? 0), SCREEN_DIVISIONS_Y),
    anchor: fitLevels ? 0 : (cap?.vMin ?? 0),
  };

  // ---- overlays in display time
  const shownIds = useMemo(() => new Set(shown.map((t) => t.id)), [shown]);
  const listAnnotations = useMemo(
    () => annotations.filter((a) => traces.some((t) => t.id === a.traceId) && (overlay ? true : a.traceId === active?.id)),
    [annotations, traces, overlay, active],
  );
  const model = useMemo((): Omit<DrawModel, "selection" | "hover"> => {
    const shift = (id: string) => (overlay ? (offsets[id] ?? 0) : 0);
    return {
      layers,
      triggerLevel: overlay && shown.length > 1 ? null : (cap?.triggerLevel ?? null),
      triggerTime: cap?.triggerTimeS ?? null,
      events: showEvents
        ? shown.map((t) => ({
            color: overlay ? traceColor(traces.indexOf(t)) : PLOT_COLORS.event,
            markers: eventMarkers(t.analysis, cuOf(t.id), shift(t.id)),
          }))
        : [],
      annotations: annotations
        .filter((a) => shownIds.has(a.traceId))
        .map((a) => {
          const s = shift(a.traceId);
          const f = cuOf(a.traceId, a.channel).fromFile;
          const level = a.level == null || f === 1 ? a.level : a.level * f;
          return s || level !== a.level ? { ...a, t0: a.t0 - s, t1: a.t1 == null ? a.t1 : a.t1 - s, level } : a;
        }),
      selectedId: props.selectedAnnotationId ?? null,
      pointers: pointers.filter((p) => shownIds.has(p.traceId)).map((p) => ({ ...p, t: p.t - shift(p.traceId), v: p.v * cuOf(p.traceId).fromFile })),
      cursors,
      draft: draft ? { kind: draft.g.kind, t0: draft.g.t0, t1: draft.g.t1, level: draft.g.level } : null,
    };
  }, [layers, overlay, shown, cap, showEvents, traces, offsets, annotations, shownIds, props.selectedAnnotationId, pointers, cursors, draft, cuOf]);

  // ---- pointer reporting
  const hoverRef = useRef<HTMLSpanElement>(null);
  const emitPointer = useFrameThrottle<LocalPointer>(props.onPointerMove);
  const onHover = useCallback(
    (p: { t: number; v: number } | null) => {
      if (hoverRef.current)
        hoverRef.current.textContent = p ? `${formatTime(p.t)} · ${formatLevel(p.v, levelUnit)}` : "";
      if (!reference) return;
      if (!p) emitPointer(null);
      else emitPointer({ traceId: reference.id, t: p.t + offsetOf(reference.id), v: p.v / refCu.fromFile });
    },
    // eslint-disable-next-line react-hooks/exhaustive-deps
    [reference, offsets, levelUnit, emitPointer, refCu],
  );

  // ---- actions
  const zoomBy = (f: number) => applyView(zoomCentre(view, f));
  const toggleCursors = () => setCursors((c) => (c ? null : defaultCursors(view.t0, view.t1, yRange.vMin, yRange.vMax)));
  const chooseTool = (k: AnnotationKind | null) => {
    setDraft(null);
    setTool((t) => (t === k ? null : k));
    if (k) setPanMode(false);
  };
  const jumpTo = (a: Annotation) => {
    props.onSelectAnnotation?.(a.id);
    if (!cap) return;
    const capSpan = cap.t1 - cap.t0;
    if (!overlay && a.traceId !== active?.id) {
      const t = traces.find((x) => x.id === a.traceId);
      const c = t ? captureView(t) : cap;
      pendingJump.current = { traceId: a.traceId, window: jumpWindow(a, c.t1 - c.t0, c.t1 - c.t0) };
      setActiveId(a.traceId);
      return;
    }
    const s = overlay ? offsetOf(a.traceId) : 0;
    applyView(jumpWindow({ kind: a.kind, t0: a.t0 - s, t1: a.t1 == null ? a.t1 : a.t1 - s }, span, capSpan));
  };
  const submitDraft = (label: string) => {
    if (!draft || !onCreateMark) return;
    const t = traces.find((x) => x.id === draft.traceId);
    const s = overlay ? offsetOf(draft.traceId) : 0;
    const g = draft.g;
    const visibleChannel = t && t.channels.length > 1 ? t.channels.find((c) => !hiddenChannels.has(c.name))?.name : undefined;
    // a mark's level is kept in the file's unit (docs/api.md: "level in the channel's unit")
    const f = cuOf(draft.traceId, visibleChannel).fromFile;
    onCreateMark({
      traceId: draft.traceId,
      kind: g.kind,
      t0: g.t0 + s,
      ...(g.t1 != null ? { t1: g.t1 + s } : {}),
      ...(g.level != null ? { level: g.level / f } : {}),
      ...(label ? { label } : {}),
      ...(visibleChannel ? { channel: visibleChannel } : {}),
    });
    setDraft(null);
  };

  const onKeyDown = (e: KeyboardEvent<HTMLElement>) => {
    const el = e.target as HTMLElement;
    if (el.closest("input, textarea, select, [contenteditable=true]")) return;
    if (e.ctrlKey || e.metaKey || e.altKey) return;
    const k = e.key;
    let handled = true;
    if (k === "+" || k === "=") zoomBy(0.5);
    else if (k === "-" || k === "_") zoomBy(2);
    else if (k === "ArrowLeft") applyView(panBy(view, e.shiftKey ? -0.5 : -0.1));
    else if (k === "ArrowRight") applyView(panBy(view, e.shiftKey ? 0.5 : 0.1));
    else if (k === "0") toCapture();
    else if (k === "c" || k === "C") toggleCursors();
    else if (k === "Escape") {
      if (draft) setDraft(null);
      else if (tool) setTool(null);
      else handled = false;
    } else if (canMark && TOOLS.some((t) => t.key === k.toLowerCase())) chooseTool(TOOLS.find((t) => t.key === k.toLowerCase())!.kind);
    else handled = false;
    if (handled) e.preventDefault();
  };

  if (!traces.length || !reference || !cap) {
    return <div className={`rounded-xl border border-ink-200 bg-white p-4 text-sm text-ink-600 ${props.className ?? ""}`}>No trace to show.</div>;
  }

  const states = shown.map((t) => windows[t.id]);
  const loading = states.some((s) => s?.loading);
  const error = states.find((s) => s?.error)?.error ?? null;
  const readout = cursors ? cursorReadout(cursors, refCu) : null;
  const listShown = props.showAnnotationList ?? annotations.length > 0;
  const hasEvents = shown.some((t) => t.analysis?.events?.length);
  const channelsToggle = channelNames.length > 1;
  const traceNames = Object.fromEntries(traces.map((t) => [t.id, t.name]));
  const units = Object.fromEntries(traces.map((t) => [t.id, cuOf(t.id)]));
  const atCapture = sameWindow(view, { t0: cap.t0, t1: cap.t1 }, 1e-6) && !fitLevels;
  const draftWhere = draft
    ? draft.g.kind === "span" && draft.g.t1 != null
      ? `${formatTime(draft.g.t0)} – ${formatTime(draft.g.t1)}`
      : draft.g.kind === "level" && draft.g.level != null
        ? `at ${formatLevel(draft.g.level, levelUnit)}`
        : `at ${formatTime(draft.g.t0)}`
    : "";

  return (
    <section
      className={`@container rounded-xl border border-ink-200 bg-white p-2 sm:p-3 outline-none ${props.className ?? ""}`}
      aria-label={overlay ? `Trace overlay of ${shown.length} traces` : `Trace ${reference.name}`}
      tabIndex={0}
      onKeyDown={onKeyDown}
    >
      {!overlay && traces.length > 1 ? (
        <div role="tablist" aria-label="Traces" className="mb-2 flex gap-1 overflow-x-auto">
          {traces.map((t) => (
            <button
              key={t.id}
              role="tab"
              type="button"
              aria-selected={t.id === active?.id}
              onClick={() => {
                setActiveId(t.id);
                setDraft(null);
              }}
              className={`min-h-10 shrink-0 rounded-md px-3 text-sm ${t.id === active?.id ? "bg-ink-800 text-white" : "bg-ink-50 text-ink-800 hover:bg-ink-100"}`}
            >
              {t.name}
            </button>
          ))}
        </div>
      ) : null}

      <div className="mb-2 flex flex-wrap items-center gap-1" role="toolbar" aria-label="View">
        <ToolButton label="Zoom in (+)" onClick={() => zoomBy(0.5)} icon={<IconZoomIn />} />
        <ToolButton label="Zoom out (−)" onClick={() => zoomBy(2)} icon={<IconZoomOut />} />
        <ToolButton label="Back to capture view (0)" text="Capture view" onClick={toCapture} icon={<IconCaptureView />} disabled={atCapture} />
        <ToolButton label="Pan mode: drag to move along the trace" text="Pan" pressed={panMode} onClick={() => setPanMode((x) => !x)} icon={<IconPan />} />
        <ToolButton label="Cursors (c)" text="Cursors" pressed={!!cursors} onClick={toggleCursors} icon={<IconCursors />} />
        <ToolButton label="Fit levels to the data" text="Fit" pressed={fitLevels} onClick={() => setFitLevels((x) => !x)} icon={<IconFitLevels />} />
        {hasEvents ? <ToolButton label="Show analysis events" text="Events" pressed={showEvents} onClick={() => setShowEvents((x) => !x)} icon={<IconEvents />} /> : null}
        {canMark ? (
          <div className="ml-auto flex flex-wrap gap-1" role="group" aria-label="Mark tools">
            {TOOLS.map((t) => (
              <ToolButton
                key={t.kind}
                label={`${t.label} (${t.key})`}
                text={t.label}
                pressed={tool === t.kind}
                onClick={() => chooseTool(t.kind)}
                icon={t.icon}
                accent
              />
            ))}
          </div>
        ) : null}
      </div>

      {overlay ? (
        <ul className="mb-2 flex flex-wrap gap-1" aria-label="Traces in the overlay">
          {traces.map((t, i) => {
            const on = !hiddenTraces.has(t.id);
            return (
              <li key={t.id}>
                <button
                  type="button"
                  aria-pressed={on}
                  title={ALIGN_TEXT[alignment[t.id]?.source ?? "start"]}
                  onClick={() =>
                    setHiddenTraces((s) => {
                      const n = new Set(s);
                      if (n.has(t.id)) n.delete(t.id);
                      else if (traces.length - n.size > 1) n.add(t.id);
                      return n;
                    })
                  }
                  className={`min-h-10 flex items-center gap-2 rounded-md border px-2 text-sm ${on ? "border-ink-300 bg-white text-ink-900" : "border-ink-100 bg-ink-50 text-ink-400 line-through"}`}
                >
                  <span className="inline-block h-1 w-5 rounded" style={{ background: traceColor(i) }} aria-hidden="true" />
                  {t.name}
                  {alignment[t.id]?.source === "start" ? <span className="text-xs text-alarm-600">not aligned</span> : null}
                </button>
              </li>
            );
          })}
        </ul>
      ) : null}
      {channelsToggle ? (
        <div className="mb-2 flex flex-wrap gap-1" role="group" aria-label="Channels">
          {channelNames.map((name, i) => {
            const on = !hiddenChannels.has(name);
            return (
              <button
                key={name}
                type="button"
                aria-pressed={on}
                onClick={() =>
                  setHiddenChannels((s) => {
                    const n = new Set(s);
                    if (n.has(name)) n.delete(name);
                    else if (channelNames.length - n.size > 1) n.add(name);
                    return n;
                  })
                }
                className={`min-h-10 flex items-center gap-2 rounded-md border px-2 text-sm ${on ? "border-ink-300 bg-white text-ink-900" : "border-ink-100 bg-ink-50 text-ink-400 line-through"}`}
              >
                <span className="inline-block h-1 w-5 rounded" style={{ background: overlay ? PLOT_COLORS.axis : traceColor(i) }} aria-hidden="true" />
                Channel {name}
              </button>
            );
          })}
        </div>
      ) : null}

      <div className={`grid gap-3 ${listShown ? "@4xl:grid-cols-[minmax(0,1fr)_16rem]" : ""}`}>
        <div className="min-w-0">
          <div ref={boxRef} className="relative">
            <PlotSurface
              width={boxWidth}
              height={plotHeight}
              view={view}
              yRange={yRange}
              xGrid={xGrid}
              yGrid={yGrid}
              levelUnit={levelUnit}
              model={model}
              tool={canMark ? tool : null}
              panMode={panMode}
              onView={(w) => applyView(w)}
              onCursors={setCursors}
              onMarkGesture={(g) => setDraft({ g, traceId: reference.id })}
              onPick={(id) => id && props.onSelectAnnotation?.(id)}
              onHover={onHover}
              onPlotArea={(a) => setPlotArea((p) => (p && p.left === a.left && p.top === a.top && p.width === a.width && p.height === a.height ? p : a))}
              ariaLabel={`${overlay ? "Overlay" : reference.name}: ${formatTime(view.t0)} to ${formatTime(view.t1)}, ${perDivText(xGrid.step, null, "time")}`}
            />
            <div className="pointer-events-none absolute right-3 top-2 flex flex-col items-end gap-1 text-xs" aria-live="polite">
              {loading ? <span className="rounded bg-white/90 px-2 py-0.5 text-ink-600 shadow-sm">Loading…</span> : null}
              {error ? <span className="rounded bg-alarm-600 px-2 py-0.5 text-white">{error.message}</span> : null}
            </div>
            {draft && plotArea ? (
              <MarkPrompt
                key={`${draft.g.kind}:${draft.g.t0}`}
                kind={draft.g.kind}
                where={draftWhere}
                x={plotArea.left + draft.g.px}
                y={plotArea.top + draft.g.py}
                boxWidth={boxWidth}
                traces={overlay ? shown.map((t) => ({ id: t.id, name: t.name })) : undefined}
                traceId={draft.traceId}
                onTraceChange={(id) => setDraft((d) => (d ? { ...d, traceId: id } : d))}
                onSubmit={submitDraft}
                onCancel={() => setDraft(null)}
              />
            ) : null}
          </div>

          <div className="mt-2 flex flex-wrap items-baseline gap-x-4 gap-y-1 text-sm text-ink-700">
            <span>
              <span className="font-semibold">{perDivText(xGrid.step, null, "time")}</span>
              {" · "}
              <span className="font-semibold">{perDivText(yGrid.step, levelUnit, "level")}</span>
            </span>
            <span className="text-ink-500">
              {formatTime(view.t0)} – {formatTime(view.t1)}
              {overlay ? " from the first firing" : ""}
            </span>
            {tool ? <span className="text-kiln-700">{toolHint(tool)}</span> : null}
            <span ref={hoverRef} className="ml-auto tabular-nums text-ink-500" aria-hidden="true" />
          </div>

          {readout ? (
            <dl className="mt-2 grid grid-cols-2 gap-x-4 gap-y-1 rounded-lg bg-ink-50 p-2 text-sm tabular-nums @xl:grid-cols-4" aria-label="Cursor readout">
              <Read k="1" v={readout.text.ta} />
              <Read k="2" v={readout.text.tb} />
              <Read k="Δt" v={readout.text.dt} strong />
              <Read k="1/Δt" v={readout.text.freq} strong />
              <Read k="A" v={readout.text.va} />
              <Read k="B" v={readout.text.vb} />
              <Read k={readout.dvLabel} v={readout.text.dv} strong />
            </dl>
          ) : null}
          <p className="mt-2 text-xs text-ink-500">
            Drag to zoom, wheel or pinch to zoom, Shift-drag or Pan to move. Keys: + − zoom, ← → pan, 0 capture view, c cursors
            {canMark ? ", p s l n marks, Esc cancel" : ""}.
          </p>
        </div>
        {listShown ? (
          <AnnotationList
            annotations={listAnnotations}
            onJump={jumpTo}
            selectedId={props.selectedAnnotationId}
            traceNames={traceNames}
            units={units}
            className="min-w-0"
          />
        ) : null}
      </div>
    </section>
  );
}

function toolHint(t: AnnotationKind): string {
  return {
    pin: "Click on the trace to pin a point.",
    span: "Drag across the time range to mark.",
    level: "Click at the level to mark.",
    note: "Click where the note belongs.",
  }[t];
}

function Read({ k, v, strong }: { k: string; v: string; strong?: boolean }) {
  return (
    <div className="flex gap-2">
      <dt className="text-ink-500">{k}</dt>
      <dd className={strong ? "font-semibold text-ink-900" : "text-ink-800"}>{v}</dd>
    </div>
  );
}

function ToolButton(p: { label: string; text?: string; icon: ReactNode; onClick: () => void; pressed?: boolean; disabled?: boolean; accent?: boolean }) {
  const on = p.pressed === true;
  return (
    <button
      type="button"
      title={p.label}
      aria-label={p.label}
      aria-pressed={p.pressed === undefined ? undefined : on}
      disabled={p.disabled}
      onClick={p.onClick}
      className={`inline-flex min-h-10 min-w-10 items-center justify-center gap-1.5 rounded-md border px-2 text-sm disabled:opacity-40 ${
        on
          ? p.accent
            ? "border-kiln-600 bg-kiln-600 text-white"
            : "border-ink-700 bg-ink-700 text-white"
          : "border-ink-200 bg-white text-ink-800 hover:bg-ink-50"
      }`}
    >
      {p.icon}
      {p.text ? <span className="hidden @2xl:inline">{p.text}</span> : null}
    </button>
  );
}
