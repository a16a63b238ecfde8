export { TraceViewer, type TraceViewerHandle } from "./components/trace-viewer";
export { AnnotationList, sortMarks, type AnnotationListProps } from "./components/annotation-list";
export { traceWindowQuery, useTraceWindow, getTraceWindow, traceWindowUrl } from "./api/get-trace-window";
export { captureView } from "./lib/capture-view";
export { jumpWindow } from "./lib/overlay-geometry";
export { TRACE_PALETTE, traceColor } from "./lib/palette";
export type * from "./types";
