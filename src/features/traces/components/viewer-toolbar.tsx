import type { ReactNode } from "react";
import type { AnnotationKind } from "../types";
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

export const MARK_TOOLS: { kind: AnnotationKind; key: string; label: string; icon: ReactNode }[] = [
  { kind: "pin", key: "p", label: "Pin", icon: <IconPin /> },
  { kind: "span", key: "s", label: "Span", icon: <IconSpan /> },
  { kind: "level", key: "l", label: "Level", icon: <IconLevel /> },
  { kind: "note", key: "n", label: "Note", icon: <IconNote /> },
];

export interface ToolbarState {
  atCapture: boolean;
  panMode: boolean;
  cursors: boolean;
  fitLevels: boolean;
  showEvents: boolean;
  hasEvents: boolean;
  canMark: boolean;
  tool: AnnotationKind | null;
}

export interface ToolbarActions {
  zoomIn: () => void;
  zoomOut: () => void;
  toCapture: () => void;
  togglePan: () => void;
  toggleCursors: () => void;
  toggleFit: () => void;
  toggleEvents: () => void;
  chooseTool: (k: AnnotationKind) => void;
}

/** A tool's name with its key in brackets, except on a touch screen (no keyboard there). */
const named = (label: string, key: string | null, touch: boolean) => (touch || !key ? label : `${label} (${key})`);

/** The viewer's buttons: zoom, capture view, pan, cursors, fit, events, and the expert's mark tools. */
export function ViewToolbar({ s, on, touch }: { s: ToolbarState; on: ToolbarActions; touch: boolean }) {
  return (
    <div className="mb-2 flex flex-wrap items-center gap-1" role="toolbar" aria-label="View">
      <ToolButton label={named("Zoom in", "+", touch)} onClick={on.zoomIn} icon={<IconZoomIn />} />
      <ToolButton label={named("Zoom out", "−", touch)} onClick={on.zoomOut} icon={<IconZoomOut />} />
      <ToolButton
        label={named("Back to capture view", "0", touch)}
        text="Capture view"
        onClick={on.toCapture}
        icon={<IconCaptureView />}
        disabled={s.atCapture}
      />
      <ToolButton
        label="Pan mode: drag to move along the trace"
        text="Pan"
        pressed={s.panMode}
        onClick={on.togglePan}
        icon={<IconPan />}
      />
      <ToolButton
        label={named("Cursors", "c", touch)}
        text="Cursors"
        pressed={s.cursors}
        onClick={on.toggleCursors}
        icon={<IconCursors />}
      />
      <ToolButton
        label="Fit levels to the data"
        text="Fit"
        pressed={s.fitLevels}
        onClick={on.toggleFit}
        icon={<IconFitLevels />}
      />
      {s.hasEvents ? (
        <ToolButton
          label="Show analysis events"
          text="Events"
          pressed={s.showEvents}
          onClick={on.toggleEvents}
          icon={<IconEvents />}
        />
      ) : null}
      {s.canMark ? (
        <div className="ml-auto flex flex-wrap gap-1" role="group" aria-label="Mark tools">
          {MARK_TOOLS.map((t) => (
            <ToolButton
              key={t.kind}
              label={named(t.label, t.key, touch)}
              title={
                touch
                  ? `${t.label}: one mark, then a drag zooms again`
                  : `${t.label} (${t.key}): one mark, then a drag zooms again; hold Shift to keep the tool`
              }
              text={t.label}
              pressed={s.tool === t.kind}
              onClick={() => on.chooseTool(t.kind)}
              icon={t.icon}
              accent
            />
          ))}
        </div>
      ) : null}
    </div>
  );
}

export interface ToolButtonProps {
  label: string;
  title?: string;
  text?: string;
  icon: ReactNode;
  onClick: () => void;
  pressed?: boolean;
  disabled?: boolean;
  accent?: boolean;
}

export function ToolButton(p: ToolButtonProps) {
  const on = p.pressed === true;
  const tone = on
    ? p.accent
      ? "border-kiln-600 bg-kiln-600 text-white"
      : "border-ink-700 bg-ink-700 text-white"
    : "border-ink-200 bg-white text-ink-800 hover:bg-ink-50";
  return (
    <button
      type="button"
      title={p.title ?? p.label}
      aria-label={p.label}
      aria-pressed={p.pressed === undefined ? undefined : on}
      disabled={p.disabled}
      onClick={p.onClick}
      className={`inline-flex min-h-10 min-w-10 items-center justify-center gap-1.5 rounded-md border px-2 text-sm disabled:opacity-40 ${tone}`}
    >
      {p.icon}
      {p.text ? <span className="hidden @2xl:inline">{p.text}</span> : null}
    </button>
  );
}
