import { useCallback, useMemo, useState, type RefObject } from "react";
import type { AnnotationKind, LocalPointer, TraceInfo, TraceViewerProps } from "../types";
import { useTouchScreen } from "../../../lib/use-media-query";
import { useElementWidth } from "./use-element-width";
import { useDebouncedValue } from "./use-debounced-value";
import { useWindowData } from "./use-window-data";
import { useTraceUnits } from "./use-trace-units";
import { useAlignment } from "./use-alignment";
import { useNavigation } from "./use-navigation";
import { useMarkTools } from "./use-mark-tools";
import { gridsFor, levelRange, usePlotLayers } from "./use-plot-layers";
import { usePlotModel } from "./use-plot-model";
import { useFrameThrottle } from "./use-frame-throttle";
import { sameWindow } from "../lib/zoom";
import { defaultCursors, type CursorPositions } from "../lib/readout";
import { formatLevel, formatTime } from "../../../lib/trace-units";
import { plotAreaWidth } from "../plot/layout";

const NONE: never[] = [];
const NO_OFFSETS: Record<string, number> = {};

function channelNamesOf(shown: TraceInfo[]): string[] {
  const names: string[] = [];
  for (const t of shown) for (const c of t.channels) if (!names.includes(c.name)) names.push(c.name);
  return names;
}

/** "Events" follows the page's `highlightEvents` whenever it changes, and the user's toggle between. */
function useEventsToggle(given: boolean | undefined): [boolean, () => void] {
  const [choice, setChoice] = useState({ given, on: given ?? true });
  if (choice.given !== given) setChoice({ given, on: given ?? true });
  return [choice.on, () => setChoice((c) => ({ ...c, on: !c.on }))];
}

/**
 * Every piece of the viewer's state, composed from its hooks (the component only lays it out), and
 * the callback ref of the element that sizes the plot.
 */
export function useViewer(props: TraceViewerProps, hoverRef: RefObject<HTMLSpanElement | null>) {
  const { traces, annotations = NONE, readOnly = false, onCreateMark } = props;
  const overlay = props.mode === "overlay" && traces.length > 0;
  const canMark = !!onCreateMark && !readOnly;
  const touch = useTouchScreen();
  const { unitsById, cuOf } = useTraceUnits(traces);
  const [hiddenTraces, setHiddenTraces] = useState<Set<string>>(() => new Set());
  const [hiddenChannels, setHiddenChannels] = useState<Set<string>>(() => new Set());
  const { alignment, offsets } = useAlignment(traces, overlay, unitsById);
  const nav = useNavigation({
    traces,
    overlay,
    hidden: hiddenTraces,
    defaultTraceId: props.defaultTraceId ?? props.flaggedTraceId,
    alignment,
    offsets,
    cuOf,
    viewWindow: props.viewWindow ?? null,
    onViewChange: props.onViewChange,
  });
  const { shown, reference, view, cap } = nav;
  const refCu = cuOf(reference?.id);

  // nothing is fetched before the plot's width is known; a hidden plot (width 0) fetches nothing
  const [boxRef, measured] = useElementWidth();
  const boxWidth = measured ? measured : null;
  const fetchView = useDebouncedValue(view, 120, sameWindow);
  const windows = useWindowData(
    shown,
    overlay ? offsets : NO_OFFSETS,
    fetchView,
    boxWidth == null ? null : plotAreaWidth(boxWidth),
  );
  const channelNames = useMemo(() => channelNamesOf(shown), [shown]);
  const layers = usePlotLayers({ traces, shown, overlay, windows, offsets, hiddenChannels, channelNames, unitsById });

  const [fitLevels, setFitLevels] = useState(false);
  const [cursors, setCursors] = useState<CursorPositions | null>(null);
  const [panMode, setPanMode] = useState(false);
  const [showEvents, toggleEvents] = useEventsToggle(props.highlightEvents);
  const offsetOf = useCallback((id: string) => (overlay ? (offsets[id] ?? 0) : 0), [overlay, offsets]);
  const marks = useMarkTools({
    canMark,
    traces,
    referenceId: reference?.id,
    layers,
    hiddenChannels,
    offsetOf,
    cuOf,
    onCreateMark,
  });

  const yRange = useMemo(() => levelRange(cap, fitLevels, layers, view), [cap, fitLevels, layers, view]);
  const grids = gridsFor(cap, view, yRange, fitLevels);
  const model = usePlotModel({
    traces,
    shown,
    overlay,
    layers,
    cap,
    offsets,
    cuOf,
    annotations,
    showEvents,
    pointers: props.pointers ?? NONE,
    selectedId: props.selectedAnnotationId ?? null,
    cursors,
    draft: marks.preview,
  });

  const emitPointer = useFrameThrottle<LocalPointer>(props.onPointerMove);
  const onHover = (p: { t: number; v: number } | null) => {
    if (hoverRef.current)
      hoverRef.current.textContent = p ? `${formatTime(p.t)} · ${formatLevel(p.v, refCu.unit)}` : "";
    if (reference)
      emitPointer(p ? { traceId: reference.id, t: p.t + offsetOf(reference.id), v: p.v / refCu.fromFile } : null);
  };

  const actions = {
    toggleCursors: () => setCursors((c) => (c ? null : defaultCursors(view.t0, view.t1, yRange.vMin, yRange.vMax))),
    chooseTool: (k: AnnotationKind) => {
      marks.choose(k);
      setPanMode(false);
    },
    togglePan: () => setPanMode((x) => !x),
    toggleFit: () => setFitLevels((x) => !x),
    toggleEvents,
  };

  const state = {
    traces,
    annotations,
    overlay,
    canMark,
    touch,
    cuOf,
    alignment,
    nav,
    refCu,
    hiddenTraces,
    setHiddenTraces,
    hiddenChannels,
    setHiddenChannels,
    channelNames,
    boxWidth,
    windows,
    fitLevels,
    cursors,
    setCursors,
    panMode,
    showEvents,
    marks,
    yRange,
    ...grids,
    model,
    onHover,
    actions,
  };
  // the element whose width sizes the plot: given apart, as the `ref` of that element
  return [state, boxRef] as const;
}

export type ViewerState = ReturnType<typeof useViewer>[0];
