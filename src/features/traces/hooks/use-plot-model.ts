import { useMemo } from "react";
import type { Annotation, RemotePointer, TraceInfo } from "../types";
import type { MarkPreview, PlotModel, TraceLayer } from "../plot/model";
import type { CaptureView } from "../lib/capture-view";
import type { CursorPositions } from "../lib/readout";
import { eventMarkers } from "../lib/overlay-geometry";
import { PLOT_COLORS, traceColor } from "../lib/palette";
import type { ChannelUnits } from "../../../lib/trace-units";

export interface PlotModelInput {
  traces: TraceInfo[];
  shown: TraceInfo[];
  overlay: boolean;
  layers: TraceLayer[];
  cap: CaptureView | null;
  showEvents: boolean;
  offsets: Record<string, number>;
  cuOf: (traceId: string | undefined, channel?: string | null) => ChannelUnits;
  annotations: Annotation[];
  pointers: RemotePointer[];
  selectedId: string | null;
  cursors: CursorPositions | null;
  draft: MarkPreview | null;
}

/** A mark in display time and its channel's physical unit. */
function displayMark(a: Annotation, shift: number, cu: ChannelUnits): Annotation {
  const f = cu.fromFile;
  const level = a.level == null || f === 1 ? a.level : a.level * f;
  return { ...a, t0: a.t0 - shift, t1: a.t1 == null ? a.t1 : a.t1 - shift, level };
}

/** Everything the plot's layers draw, in display time and each channel's physical unit. */
export function usePlotModel(inp: PlotModelInput): PlotModel {
  const {
    traces,
    shown,
    overlay,
    layers,
    cap,
    showEvents,
    offsets,
    cuOf,
    annotations,
    pointers,
    selectedId,
    cursors,
    draft,
  } = inp;
  const shownIds = useMemo(() => new Set(shown.map((t) => t.id)), [shown]);
  const events = useMemo(
    () =>
      showEvents
        ? shown.map((t) => ({
            color: overlay ? traceColor(traces.indexOf(t)) : PLOT_COLORS.event,
            markers: eventMarkers(t.analysis, cuOf(t.id), overlay ? (offsets[t.id] ?? 0) : 0),
          }))
        : [],
    [showEvents, shown, overlay, traces, cuOf, offsets],
  );
  const marks = useMemo(
    () =>
      annotations
        .filter((a) => shownIds.has(a.traceId))
        .map((a) => displayMark(a, overlay ? (offsets[a.traceId] ?? 0) : 0, cuOf(a.traceId, a.channel))),
    [annotations, shownIds, overlay, offsets, cuOf],
  );
  const shownPointers = useMemo(
    () =>
      pointers
        .filter((p) => shownIds.has(p.traceId))
        .map((p) => ({ ...p, t: p.t - (overlay ? (offsets[p.traceId] ?? 0) : 0), v: p.v * cuOf(p.traceId).fromFile })),
    [pointers, shownIds, overlay, offsets, cuOf],
  );
  return useMemo(
    () => ({
      layers,
      triggerLevel: overlay && shown.length > 1 ? null : (cap?.triggerLevel ?? null),
      triggerTime: cap?.triggerTimeS ?? null,
      events,
      annotations: marks,
      selectedId,
      pointers: shownPointers,
      cursors,
      draft,
    }),
    [layers, overlay, shown.length, cap, events, marks, selectedId, shownPointers, cursors, draft],
  );
}
