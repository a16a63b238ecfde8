import { useMemo, useState } from "react";
import type { AnnotationKind, MarkDraft, TraceInfo } from "../types";
import type { MarkGesture } from "../plot/gestures";
import type { MarkPreview, TraceLayer } from "../plot/model";
import { layerOf } from "../plot/pin-level";
import { traceLevelAt } from "../lib/snap";
import { formatLevel, formatTime, type ChannelUnits } from "../../../lib/trace-units";

export interface MarkToolsInput {
  canMark: boolean;
  traces: TraceInfo[];
  /** the trace a new mark goes on (the prompt may choose another in an overlay) */
  referenceId: string | undefined;
  layers: TraceLayer[];
  hiddenChannels: Set<string>;
  offsetOf: (traceId: string) => number;
  cuOf: (traceId: string | undefined, channel?: string | null) => ChannelUnits;
  onCreateMark?: (d: MarkDraft) => void;
}

export interface Draft {
  g: MarkGesture;
  traceId: string;
}

export interface MarkTools {
  /** the armed tool (null: a drag zooms) */
  tool: AnnotationKind | null;
  draft: Draft | null;
  /** the draft as the plot previews it: a pin already on its trace */
  preview: MarkPreview | null;
  /** "at 18.5 ms", "18.5 ms – 20 ms", "at 7.5 kV" */
  where: string;
  choose: (k: AnnotationKind | null) => void;
  onGesture: (g: MarkGesture, traceId: string | undefined) => void;
  setDraftTrace: (id: string) => void;
  submit: (label: string) => void;
  cancel: () => void;
  /** Escape: drops the draft, else puts the tool down; false when there was nothing to drop */
  escape: () => boolean;
}

/** The channel a mark on this trace belongs to: the first one shown, when the trace has several. */
function visibleChannel(t: TraceInfo | undefined, hidden: Set<string>): string | undefined {
  return t && t.channels.length > 1 ? t.channels.find((c) => !hidden.has(c.name))?.name : undefined;
}

/**
 * The expert's mark tools. A tool disarms after one mark (the next drag zooms again) unless Shift
 * was held; a pin snaps to its trace: its level is the trace's value at its time (the part of a
 * squeezed bucket nearest the click), taken from the data on screen.
 */
export function useMarkTools(inp: MarkToolsInput): MarkTools {
  const { canMark, traces, layers, hiddenChannels, cuOf } = inp;
  const [toolState, setTool] = useState<AnnotationKind | null>(null);
  const [draftState, setDraft] = useState<Draft | null>(null);
  const tool = canMark ? toolState : null;
  const draft = canMark ? draftState : null;

  const channelOf = (traceId: string) =>
    visibleChannel(
      traces.find((t) => t.id === traceId),
      hiddenChannels,
    );
  /** a pin's level on its trace (display unit), else where it was clicked */
  const snapped = (d: Draft): number | undefined => {
    if (d.g.kind !== "pin" || d.g.level == null) return d.g.level;
    const layer = layerOf(layers, d.traceId, channelOf(d.traceId));
    return (layer ? traceLevelAt(layer, d.g.t0, d.g.level) : null) ?? d.g.level;
  };
  const level = draft ? snapped(draft) : undefined;
  const preview = useMemo<MarkPreview | null>(
    () => (draft ? { kind: draft.g.kind, t0: draft.g.t0, t1: draft.g.t1, level } : null),
    [draft, level],
  );
  const unit = draft ? cuOf(draft.traceId, channelOf(draft.traceId)).unit : "V";
  const where = !draft
    ? ""
    : draft.g.kind === "span" && draft.g.t1 != null
      ? `${formatTime(draft.g.t0)} – ${formatTime(draft.g.t1)}`
      : draft.g.kind === "level" && level != null
        ? `at ${formatLevel(level, unit)}`
        : draft.g.kind === "pin" && level != null
          ? `at ${formatTime(draft.g.t0)}, ${formatLevel(level, unit)}`
          : `at ${formatTime(draft.g.t0)}`;

  const submit = (label: string) => {
    if (!draft || !inp.onCreateMark) return;
    const s = inp.offsetOf(draft.traceId);
    const channel = channelOf(draft.traceId);
    // a mark's level is kept in the file's unit (docs/api.md: "level in the channel's unit")
    const f = cuOf(draft.traceId, channel).fromFile;
    const g = draft.g;
    inp.onCreateMark({
      traceId: draft.traceId,
      kind: g.kind,
      t0: g.t0 + s,
      ...(g.t1 != null ? { t1: g.t1 + s } : {}),
      ...(level != null ? { level: level / f } : {}),
      ...(label ? { label } : {}),
      ...(channel ? { channel } : {}),
    });
    setDraft(null);
  };

  return {
    tool,
    draft,
    preview,
    where,
    choose: (k) => {
      setDraft(null);
      setTool((t) => (t === k ? null : k));
    },
    onGesture: (g, traceId) => {
      if (!traceId) return;
      setDraft({ g, traceId });
      if (!g.keepArmed) setTool(null);
    },
    setDraftTrace: (id) => setDraft((d) => (d ? { ...d, traceId: id } : d)),
    submit,
    cancel: () => setDraft(null),
    escape: () => {
      if (draft) setDraft(null);
      else if (tool) setTool(null);
      else return false;
      return true;
    },
  };
}
