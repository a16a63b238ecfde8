import type { CaptureSettings } from "../../../shared/schemas/capture-settings";

/**
 * Capture settings as the viewer needs them: volts/division and time/division are required to
 * frame the capture view; everything else is optional (defaults as in the shared schema).
 */
export type TraceSettings = Pick<CaptureSettings, "voltsPerDiv" | "timePerDivS"> &
  Partial<Omit<CaptureSettings, "voltsPerDiv" | "timePerDivS">>;

export interface TraceChannelInfo {
  name: string;
  /** the file's unit for this channel ("V", "mV", "A" …); null or "" means volts */
  unit: string | null;
  min: number;
  max: number;
}

/** One measured event of an analysis (secondary ignition: one firing). Extra metrics are kept. */
export interface AnalysisEvent {
  /** time of the firing line, in the trace's own time base (seconds, same as the window's `t`) */
  timeS: number;
  /** firing line height above the baseline, in `analysis.unit` */
  peak?: number;
  /** spark duration from the firing line to the end of the spark line, ms */
  burnTimeMs?: number;
  /** the spark line's level above the baseline (a magnitude, like peak), in `analysis.unit` */
  burnLevel?: number;
  oscillations?: number;
  /** spark line start and end, seconds in the trace's time base (drawn as the burn bracket) */
  sparkStartS?: number;
  sparkEndS?: number;
  [metric: string]: unknown;
}

export interface TraceAnalysis {
  kind: string;
  /** unit of `peak` and `burnLevel`: "V" at the pickup, or "kV" when a kV-per-volt scale is set */
  unit: string;
  events: AnalysisEvent[];
  /** baseline level in `unit` (peaks are heights above it); also read from summary.baseline */
  baseline?: number;
  summary?: { baseline?: number; polarity?: "positive" | "negative"; [key: string]: unknown } | null;
  findings?: { code: string; severity?: string; message?: string; advice?: string }[];
  [key: string]: unknown;
}

export interface TraceInfo {
  id: string;
  name: string;
  samples: number;
  sampleRateHz: number;
  durationS: number;
  /** time of the first sample, seconds (0 when absent) */
  t0?: number;
  channels: TraceChannelInfo[];
  settings: TraceSettings;
  analysis?: TraceAnalysis | null;
}

export type AnnotationKind = "pin" | "span" | "level" | "note";

export interface Annotation {
  id: string;
  traceId: string;
  kind: AnnotationKind;
  /** seconds in the trace's own time base */
  t0: number;
  /** end of a span, seconds */
  t1?: number | null;
  /** level in the channel's unit (pin: optional dot; level: the line) */
  level?: number | null;
  label?: string | null;
  /** CSS colour of the author */
  color: string;
  authorName?: string | null;
  channel?: string | null;
  /** optimistic, not yet acknowledged: drawn dashed */
  pending?: boolean;
  seq?: number;
}

/** What the viewer hands to onCreateMark; the caller stores it and returns an Annotation later. */
export interface MarkDraft {
  traceId: string;
  kind: AnnotationKind;
  t0: number;
  t1?: number;
  level?: number;
  label?: string;
  channel?: string;
}

/** Another participant's pointer, in the trace's own time base and channel unit. */
export interface RemotePointer {
  userId: string;
  name: string;
  color: string;
  traceId: string;
  t: number;
  v: number;
}

/** The local pointer as reported by onPointerMove; null when it leaves the plot. */
export type LocalPointer = { traceId: string; t: number; v: number } | null;

/**
 * The visible time window, in the own time base of trace `traceId` (so a follower can map it onto
 * any trace: in overlay mode the viewer converts through the alignment offsets).
 */
export interface ViewWindow {
  traceId: string;
  t0: number;
  t1: number;
}

/** `GET /api/traces/:id/window?t0=&t1=&width=` */
export interface TraceWindowData {
  t: number[];
  series: { name: string; min: number[]; max: number[] }[];
}

export type ViewerMode = "single" | "overlay";

export interface TraceViewerProps {
  traces: TraceInfo[];
  /** "single" (default) shows one trace at a time with a selector; "overlay" aligns all of them */
  mode?: ViewerMode;
  /** the trace to look at (the comparison's odd one out, or one with a problem): marked in the selector and open first */
  flaggedTraceId?: string;
  /** the trace open first in single mode (default: the flagged one, else the first) */
  defaultTraceId?: string;
  annotations?: Annotation[];
  pointers?: RemotePointer[];
  /** the local pointer over the plot, at most once per animation frame; null on leave */
  onPointerMove?: (p: LocalPointer) => void;
  /** controlled window (follow mode); applied whenever it changes */
  viewWindow?: ViewWindow | null;
  /** user-driven changes of the window (zoom, pan, trace switch) */
  onViewChange?: (w: ViewWindow) => void;
  /** enables the mark tools (unless readOnly) */
  onCreateMark?: (draft: MarkDraft) => void;
  onSelectAnnotation?: (id: string) => void;
  selectedAnnotationId?: string | null;
  /** draw analysis event markers (firing tick, burn bracket); default true */
  highlightEvents?: boolean;
  readOnly?: boolean;
  /** show the list of every mark on the traces under/beside the plot; default true when annotations are given */
  showAnnotationList?: boolean;
  /** plot height in CSS px; default adapts to width (240–420) */
  height?: number;
  /** "card" (default): a bordered card; "flush": no frame, the plot runs to the container's edges (a phone's live review) */
  variant?: "card" | "flush";
  className?: string;
}
