/**
 * What the plot draws, in display time (trace time − overlay offset) and in each channel's physical
 * unit. The viewer builds a PlotModel; the surface adds what its gestures are doing (PlotTransient);
 * each layer's uPlot plugin reads the latest state through a getter at every draw.
 */
import type { Annotation, AnnotationKind, RemotePointer } from "../types";
import type { CursorPositions } from "../lib/readout";
import type { EventMarker } from "../lib/overlay-geometry";

export interface TraceLayer {
  key: string;
  /** the trace and channel it shows (pins stand on their own trace's channel) */
  traceId: string;
  channel: string;
  color: string;
  /** display time of each bucket */
  t: ArrayLike<number>;
  min: ArrayLike<number>;
  max: ArrayLike<number>;
  /** secondary channels in overlay mode are drawn lighter */
  faint?: boolean;
}

export interface MarkPreview {
  kind: AnnotationKind;
  t0: number;
  t1?: number;
  level?: number;
}

export interface PlotModel {
  layers: TraceLayer[];
  /** recorded trigger level (channel unit) and trigger time (display time), when known */
  triggerLevel: number | null;
  triggerTime: number | null;
  events: { color: string; markers: EventMarker[] }[];
  /** annotations with display times and levels in the channel's physical unit */
  annotations: Annotation[];
  selectedId: string | null;
  pointers: RemotePointer[];
  cursors: CursorPositions | null;
  /** preview of a mark awaiting its label (display time) */
  draft: MarkPreview | null;
}

export interface PlotTransient {
  /** zoom or span selection in progress: CSS px from the plot's left edge */
  selection: { x0: number; x1: number; kind: "zoom" | "mark" } | null;
  /** mouse position over the plot, CSS px relative to the plot area */
  hover: { x: number; y: number } | null;
}

export type PlotState = PlotModel & PlotTransient;

/** How a plugin reads the state current at draw time. */
export type GetPlotState = () => PlotState;
