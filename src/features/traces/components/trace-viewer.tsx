import { useImperativeHandle, useRef, useState, type KeyboardEvent, type Ref } from "react";
import type { Annotation, TraceViewerProps } from "../types";
import { useViewer, type ViewerState } from "../hooks/use-viewer";
import { handleViewerKey } from "../hooks/viewer-keys";
import { panBy, sameWindow, zoomCentre } from "../lib/zoom";
import { cursorReadout, perDivText } from "../lib/readout";
import { formatTime } from "../../../lib/trace-units";
import { PlotSurface } from "./plot-surface";
import { AnnotationList } from "./annotation-list";
import { MarkPrompt } from "./mark-prompt";
import { MARK_TOOLS, ViewToolbar } from "./viewer-toolbar";
import { ChannelToggles, OverlayToggles, TraceTabs } from "./viewer-toggles";
import { CursorReadout } from "./cursor-readout";
import { GestureHints, ViewStatus } from "./view-status";

export type { TraceViewerProps } from "../types";

/** What a page may ask of the viewer: open a mark (on any of its traces) and centre it. */
export interface TraceViewerHandle {
  jumpTo: (a: Annotation) => void;
}

type Area = { left: number; top: number; width: number; height: number };

/** The plot with its loading note and, while a new mark waits for its label, the prompt. */
function ViewerPlot({
  v,
  props,
  height,
  measure,
}: {
  v: ViewerState;
  props: TraceViewerProps;
  height: number;
  measure: (el: HTMLElement | null) => void;
}) {
  const { nav, marks, boxWidth, overlay } = v;
  const [area, setArea] = useState<Area | null>(null);
  const reference = nav.reference!;
  const states = nav.shown.map((t) => v.windows[t.id]);
  const error = states.find((s) => s?.error)?.error ?? null;
  return (
    <div ref={measure} className="relative" style={{ minHeight: height }}>
      {boxWidth ? (
        <PlotSurface
          width={boxWidth}
          height={height}
          view={nav.view}
          yRange={v.yRange}
          xGrid={v.xGrid}
          yGrid={v.yGrid}
          levelUnit={v.refCu.unit}
          model={v.model}
          tool={marks.tool}
          panMode={v.panMode}
          onView={nav.applyView}
          onCursors={v.setCursors}
          onMarkGesture={(g) => marks.onGesture(g, reference.id)}
          onPick={(id) => id && props.onSelectAnnotation?.(id)}
          onHover={v.onHover}
          onPlotArea={(a) =>
            setArea((p) =>
              p && p.left === a.left && p.top === a.top && p.width === a.width && p.height === a.height ? p : a,
            )
          }
          ariaLabel={`${overlay ? "Overlay" : reference.name}: ${formatTime(nav.view.t0)} to ${formatTime(nav.view.t1)}, ${perDivText(v.xGrid.step, null, "time")}`}
        />
      ) : null}
      <div
        className="pointer-events-none absolute right-3 top-2 flex flex-col items-end gap-1 text-xs"
        aria-live="polite"
      >
        {states.some((s) => s?.loading) ? (
          <span className="rounded bg-white/90 px-2 py-0.5 text-ink-600 shadow-sm">Loading…</span>
        ) : null}
        {error ? <span className="rounded bg-alarm-600 px-2 py-0.5 text-white">{error.message}</span> : null}
      </div>
      {marks.draft && area && boxWidth ? (
        <MarkPrompt
          key={`${marks.draft.g.kind}:${marks.draft.g.t0}`}
          kind={marks.draft.g.kind}
          where={marks.where}
          x={area.left + marks.draft.g.px}
          y={area.top + marks.draft.g.py}
          boxWidth={boxWidth}
          traces={overlay ? nav.shown.map((t) => ({ id: t.id, name: t.name })) : undefined}
          traceId={marks.draft.traceId}
          onTraceChange={marks.setDraftTrace}
          onSubmit={marks.submit}
          onCancel={marks.cancel}
        />
      ) : null}
    </div>
  );
}

/** The viewer's controls above the plot: trace tabs, the toolbar, the overlay's and the channels' toggles. */
function ViewerControls({ v, flaggedId, inset }: { v: ViewerState; flaggedId?: string; inset: string }) {
  const { nav, marks } = v;
  const cap = nav.cap!;
  const view = nav.view;
  return (
    <div className={inset}>
      {!v.overlay && v.traces.length > 1 ? (
        <TraceTabs
          traces={v.traces}
          activeId={nav.active?.id}
          flaggedId={flaggedId}
          onSelect={(id) => {
            marks.cancel();
            nav.selectTrace(id);
          }}
        />
      ) : null}
      <ViewToolbar
        touch={v.touch}
        s={{
          atCapture: sameWindow(view, { t0: cap.t0, t1: cap.t1 }, 1e-6) && !v.fitLevels,
          panMode: v.panMode,
          cursors: !!v.cursors,
          fitLevels: v.fitLevels,
          showEvents: v.showEvents,
          hasEvents: nav.shown.some((t) => t.analysis?.events?.length),
          canMark: v.canMark,
          tool: marks.tool,
        }}
        on={{
          zoomIn: () => nav.applyView(zoomCentre(view, 0.5)),
          zoomOut: () => nav.applyView(zoomCentre(view, 2)),
          toCapture: nav.toCapture,
          ...v.actions,
        }}
      />
      {v.overlay ? (
        <OverlayToggles
          traces={v.traces}
          hidden={v.hiddenTraces}
          alignment={v.alignment}
          onChange={v.setHiddenTraces}
        />
      ) : null}
      {v.channelNames.length > 1 ? (
        <ChannelToggles
          names={v.channelNames}
          hidden={v.hiddenChannels}
          overlay={v.overlay}
          onChange={v.setHiddenChannels}
        />
      ) : null}
    </div>
  );
}

/**
 * The trace viewer: opens at the capture view (the technician's screen; an overlay opens zoomed on
 * the firing events), then zoom, pan, cursors, channel toggles, overlay of several traces aligned on
 * their first firing, analysis event markers, every mark of the traces (a list that opens each
 * mark's trace at it), other participants' pointers and the expert's mark tools.
 */
export function TraceViewer({ ref, ...props }: TraceViewerProps & { ref?: Ref<TraceViewerHandle> }) {
  const hoverRef = useRef<HTMLSpanElement>(null);
  const [v, measure] = useViewer(props, hoverRef);
  const { nav, marks, traces } = v;
  useImperativeHandle(ref, () => ({ jumpTo: nav.jumpTo }), [nav.jumpTo]);
  if (!traces.length || !nav.reference || !nav.cap) {
    return (
      <div className={`rounded-xl border border-ink-200 bg-white p-4 text-sm text-ink-600 ${props.className ?? ""}`}>
        No trace to show.
      </div>
    );
  }
  const listShown = props.showAnnotationList ?? v.annotations.length > 0;
  const height = props.height ?? Math.round(Math.min(420, Math.max(240, (v.boxWidth ?? 600) * 0.55)));
  const traceIds = traces.map((t) => t.id);
  const view = nav.view;
  const flush = props.variant === "flush";
  // a flush viewer keeps its controls and texts off the screen's edges; the plot runs to them
  const inset = flush ? "px-3" : "";
  const onKeyDown = (e: KeyboardEvent<HTMLElement>) =>
    handleViewerKey(e, {
      zoomBy: (f) => nav.applyView(zoomCentre(view, f)),
      panBy: (f) => nav.applyView(panBy(view, f)),
      toCapture: nav.toCapture,
      toggleCursors: v.actions.toggleCursors,
      escape: marks.escape,
      toolFor: (k) => (v.canMark ? (MARK_TOOLS.find((t) => t.key === k)?.kind ?? null) : null),
      chooseTool: v.actions.chooseTool,
    });
  return (
    <section
      className={`@container bg-white outline-none ${flush ? "py-1" : "rounded-xl border border-ink-200 p-2 sm:p-3"} ${props.className ?? ""}`}
      aria-label={v.overlay ? `Trace overlay of ${nav.shown.length} traces` : `Trace ${nav.reference.name}`}
      tabIndex={0}
      onKeyDown={onKeyDown}
    >
      <ViewerControls v={v} flaggedId={props.flaggedTraceId} inset={inset} />
      <div className={`grid gap-3 ${listShown ? "@4xl:grid-cols-[minmax(0,1fr)_16rem]" : ""}`}>
        <div className="min-w-0">
          <ViewerPlot v={v} props={props} height={height} measure={measure} />
          <div className={inset}>
            <ViewStatus
              xStep={v.xGrid.step}
              yStep={v.yGrid.step}
              levelUnit={v.refCu.unit}
              view={view}
              overlay={v.overlay}
              tool={marks.tool}
              hoverRef={hoverRef}
            />
            {v.cursors ? <CursorReadout readout={cursorReadout(v.cursors, v.refCu)} /> : null}
            <GestureHints touch={v.touch} canMark={v.canMark} />
          </div>
        </div>
        {listShown ? (
          <AnnotationList
            annotations={v.annotations.filter((a) => traceIds.includes(a.traceId))}
            onJump={(a) => {
              props.onSelectAnnotation?.(a.id);
              nav.jumpTo(a);
            }}
            selectedId={props.selectedAnnotationId}
            traceNames={Object.fromEntries(traces.map((t) => [t.id, t.name]))}
            traceOrder={traceIds}
            units={Object.fromEntries(traces.map((t) => [t.id, v.cuOf(t.id)]))}
            className="min-w-0"
          />
        ) : null}
      </div>
    </section>
  );
}
