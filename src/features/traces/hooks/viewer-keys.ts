import type { KeyboardEvent } from "react";
import type { AnnotationKind } from "../types";

export interface KeyActions {
  zoomBy: (factor: number) => void;
  panBy: (fraction: number) => void;
  toCapture: () => void;
  toggleCursors: () => void;
  /** Escape: drop a draft or put the tool down; false when there was nothing */
  escape: () => boolean;
  /** the mark tool of a key, when marking is allowed */
  toolFor: (key: string) => AnnotationKind | null;
  chooseTool: (k: AnnotationKind) => void;
}

/**
 * The viewer's keys: + − zoom, ← → pan (Shift: by half a screen), 0 capture view, c cursors,
 * p s l n the mark tools, Esc cancels. Keys typed into a field are left alone.
 */
export function handleViewerKey(e: KeyboardEvent<HTMLElement>, on: KeyActions): void {
  const el = e.target as HTMLElement;
  if (el.closest("input, textarea, select, [contenteditable=true]")) return;
  if (e.ctrlKey || e.metaKey || e.altKey) return;
  const k = e.key;
  let handled = true;
  if (k === "+" || k === "=") on.zoomBy(0.5);
  else if (k === "-" || k === "_") on.zoomBy(2);
  else if (k === "ArrowLeft") on.panBy(e.shiftKey ? -0.5 : -0.1);
  else if (k === "ArrowRight") on.panBy(e.shiftKey ? 0.5 : 0.1);
  else if (k === "0") on.toCapture();
  else if (k === "c" || k === "C") on.toggleCursors();
  else if (k === "Escape") handled = on.escape();
  else {
    const tool = on.toolFor(k.toLowerCase());
    if (tool) on.chooseTool(tool);
    else handled = false;
  }
  if (handled) e.preventDefault();
}
