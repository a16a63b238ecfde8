import type { Ref } from "react";
import type { AnnotationKind } from "../types";
import { perDivText } from "../lib/readout";
import { formatTime } from "../../../lib/trace-units";

const TOOL_HINT: Record<AnnotationKind, string> = {
  pin: "Tap or click on the trace to pin it.",
  span: "Drag across the time range to mark.",
  level: "Tap or click at the level to mark.",
  note: "Tap or click where the note belongs.",
};

export interface ViewStatusProps {
  xStep: number;
  yStep: number;
  levelUnit: string;
  view: { t0: number; t1: number };
  overlay: boolean;
  tool: AnnotationKind | null;
  /** the pointer's time and level, written straight into this element on each move */
  hoverRef: Ref<HTMLSpanElement>;
}

/** The line under the plot: time/div and level/div, the window shown, the armed tool's hint, the pointer's place. */
export function ViewStatus({ xStep, yStep, levelUnit, view, overlay, tool, hoverRef }: ViewStatusProps) {
  return (
    <div className="mt-2 flex flex-wrap items-baseline gap-x-4 gap-y-1 text-sm text-ink-700">
      <span>
        <span className="font-semibold">{perDivText(xStep, null, "time")}</span>
        {" · "}
        <span className="font-semibold">{perDivText(yStep, levelUnit, "level")}</span>
      </span>
      <span className="text-ink-500">
        {formatTime(view.t0)} – {formatTime(view.t1)}
        {overlay ? " from the first firing" : ""}
      </span>
      {tool ? <span className="text-kiln-700">{TOOL_HINT[tool]}</span> : null}
      <span ref={hoverRef} className="ml-auto tabular-nums text-ink-500" aria-hidden="true" />
    </div>
  );
}

/** How to drive the plot: gestures always, keys only where there is a keyboard (not on a touch screen). */
export function GestureHints({ touch, canMark }: { touch: boolean; canMark: boolean }) {
  if (touch) {
    return <p className="mt-2 text-xs text-ink-500">Drag to zoom, pinch to zoom, Pan to move along the trace.</p>;
  }
  return (
    <p className="mt-2 text-xs text-ink-500">
      Drag to zoom, wheel or pinch to zoom, Shift-drag or Pan to move. Keys: + − zoom, ← → pan, 0 capture view, c
      cursors
      {canMark ? ", p s l n marks (Shift keeps a tool armed), Esc cancel" : ""}.
    </p>
  );
}
