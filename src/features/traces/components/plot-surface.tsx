import { useEffect, useLayoutEffect, useRef } from "react";
import uPlot from "uplot";
import "uplot/dist/uPlot.min.css";
import type { AnnotationKind } from "../types";
import type { CursorPositions } from "../lib/readout";
import { gridLines, labelEvery } from "../lib/grid";
import { formatTicks } from "../lib/units";
import { annotationShapes, hitTestAnnotations, hitTestCursors, type CursorHandle, type PlotFrame } from "../lib/overlay-geometry";
import { panByPixels, pinchWindow, pxToTime, selectionToWindow, wheelFactor, zoomAround, type Span } from "../lib/zoom";
import { PLOT_COLORS } from "../lib/palette";
import { drawModel, type DrawModel } from "../plot/draw";

export interface MarkGesture {
  kind: AnnotationKind;
  t0: number;
  t1?: number;
  level?: number;
  /** where the gesture ended, CSS px relative to the plot area (to place the label prompt) */
  px: number;
  py: number;
}

export interface PlotSurfaceProps {
  width: number;
  height: number;
  view: Span;
  yRange: { vMin: number; vMax: number };
  xGrid: { step: number; anchor: number };
  yGrid: { step: number; anchor: number };
  levelUnit: string | null;
  model: Omit<DrawModel, "selection" | "hover">;
  tool: AnnotationKind | null;
  panMode: boolean;
  /** user-driven window change (the parent clamps it) */
  onView: (w: Span) => void;
  onCursors: (c: CursorPositions) => void;
  onMarkGesture: (g: MarkGesture) => void;
  onPick: (id: string | null) => void;
  /** pointer over the plot in display time and channel unit; null on leave */
  onHover: (p: { t: number; v: number } | null) => void;
  /** plot area (inside the axes) in CSS px, reported after layout */
  onPlotArea?: (a: { left: number; top: number; width: number; height: number }) => void;
  ariaLabel: string;
}

type Gesture =
  | { type: "select"; id: number; x0: number; x1: number; y0: number; touch: boolean }
  | { type: "pan"; id: number; x0: number; start: Span }
  | { type: "cursor"; id: number; handle: CursorHandle }
  | { type: "mark"; id: number; kind: AnnotationKind; x0: number; y0: number; x1: number; y1: number }
  | { type: "pinch"; ids: [number, number]; d0: number; c0: number; start: Span };

const AXIS_FONT = '11px "Merriweather Sans", ui-sans-serif, system-ui, sans-serif';
const Y_AXIS_PX = 60;
const X_AXIS_PX = 30;

/** The uPlot canvas with the viewer's own drawing and gestures (drag-zoom, pan, pinch, wheel, cursors, marks). */
export function PlotSurface(props: PlotSurfaceProps) {
  const hostRef = useRef<HTMLDivElement>(null);
  const uRef = useRef<uPlot | null>(null);
  const p = useRef(props);
  p.current = props;
  const gesture = useRef<Gesture | null>(null);
  const hover = useRef<{ x: number; y: number } | null>(null);
  const touches = useRef(new Map<number, { x: number; y: number }>());

  // create once; everything else reads the latest props through the ref
  useLayoutEffect(() => {
    const host = hostRef.current!;
    const xSplits = (_u: uPlot, _i: number, min: number, max: number) => gridLines(min, max, p.current.xGrid.step, p.current.xGrid.anchor, 400);
    const ySplits = (_u: uPlot, _i: number, min: number, max: number) => gridLines(min, max, p.current.yGrid.step, p.current.yGrid.anchor, 400);
    const labels = (u: uPlot, splits: number[], step: number, unit: string | null, along: "x" | "y") => {
      const px = along === "x" ? u.bbox.width / (uPlot.pxRatio || 1) : u.bbox.height / (uPlot.pxRatio || 1);
      const every = labelEvery(splits.length, px, along === "x" ? 64 : 22);
      const text = formatTicks(splits, step, unit);
      const shown = text.map((t, i) => (i % every === 0 ? t : ""));
      // the level labels as drawn, readable from the DOM (browser tests, assistive checks)
      if (along === "y" && hostRef.current) hostRef.current.dataset.levelLabels = shown.filter(Boolean).join("|");
      return shown;
    };
    const opts: uPlot.Options = {
      width: Math.max(p.current.width, 120),
      height: Math.max(p.current.height, 120),
      padding: [10, 28, 0, 0],
      legend: { show: false },
      cursor: { show: false, drag: { x: false, y: false, setScale: false } },
      select: { show: false, left: 0, top: 0, width: 0, height: 0 },
      scales: {
        x: { time: false, auto: false, range: () => [p.current.view.t0, p.current.view.t1] },
        y: { auto: false, range: () => [p.current.yRange.vMin, p.current.yRange.vMax] },
      },
      series: [{}, { scale: "y", stroke: "transparent", points: { show: false } }],
      axes: [
        {
          scale: "x",
          stroke: PLOT_COLORS.axis,
          font: AXIS_FONT,
          size: X_AXIS_PX,
          gap: 4,
          grid: { stroke: PLOT_COLORS.gridMajor, width: 1 },
          ticks: { stroke: PLOT_COLORS.gridMajor, width: 1, size: 4 },
          splits: xSplits,
          values: (u, splits) => labels(u, splits, p.current.xGrid.step, "s", "x"),
        },
        {
          scale: "y",
          side: 3,
          stroke: PLOT_COLORS.axis,
          font: AXIS_FONT,
          size: Y_AXIS_PX,
          gap: 4,
          grid: { stroke: PLOT_COLORS.gridMajor, width: 1 },
          ticks: { stroke: PLOT_COLORS.gridMajor, width: 1, size: 4 },
          splits: ySplits,
          values: (u, splits) => labels(u, splits, p.current.yGrid.step, p.current.levelUnit, "y"),
        },
      ],
      hooks: {
        drawClear: [
          (u) => {
            // the light plot area under the grid
            const { left, top, width, height } = u.bbox;
            u.ctx.save();
            u.ctx.fillStyle = PLOT_COLORS.area;
            u.ctx.fillRect(left, top, width, height);
            u.ctx.restore();
          },
        ],
        draw: [
          (u) => {
            drawModel(u, { ...p.current.model, selection: selectionOf(gesture.current, u), hover: hover.current });
            // a frame around the plot area
            const { left, top, width, height } = u.bbox;
            u.ctx.save();
            u.ctx.strokeStyle = PLOT_COLORS.gridMajor;
            u.ctx.lineWidth = 1;
            u.ctx.strokeRect(left + 0.5, top + 0.5, width - 1, height - 1);
            u.ctx.restore();
          },
        ],
        setSize: [(u) => reportArea(u)],
        ready: [(u) => reportArea(u)],
      },
    };
    const v = p.current.view;
    const u = new uPlot(opts, [[v.t0, v.t1], [null, null]] as unknown as uPlot.AlignedData, host);
    uRef.current = u;
    const detach = attachGestures(u);
    return () => {
      detach();
      u.destroy();
      uRef.current = null;
    };

    function reportArea(u: uPlot) {
      const pr = uPlot.pxRatio || 1;
      p.current.onPlotArea?.({ left: u.bbox.left / pr, top: u.bbox.top / pr, width: u.bbox.width / pr, height: u.bbox.height / pr });
    }
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, []);

  useEffect(() => {
    // a hidden container measures 0: keep the last real size rather than collapse the plot
    if (props.width < 50) return;
    uRef.current?.setSize({ width: props.width, height: Math.max(props.height, 120) });
  }, [props.width, props.height]);

  useEffect(() => {
    const u = uRef.current;
    if (!u) return;
    u.batch(() => {
      u.setScale("x", { min: props.view.t0, max: props.view.t1 });
      u.setScale("y", { min: props.yRange.vMin, max: props.yRange.vMax });
    });
  }, [props.view.t0, props.view.t1, props.yRange.vMin, props.yRange.vMax]);

  useEffect(() => {
    uRef.current?.redraw(false, true);
  }, [props.model, props.xGrid.step, props.xGrid.anchor, props.yGrid.step, props.yGrid.anchor, props.levelUnit]);

  // the shown time window (s) and level range (channel unit), readable from the DOM for browser tests
  return (
    <div
      ref={hostRef}
      className="select-none"
      role="img"
      aria-label={props.ariaLabel}
      data-window-t0={props.view.t0}
      data-window-t1={props.view.t1}
      data-vmin={props.yRange.vMin}
      data-vmax={props.yRange.vMax}
      data-level-unit={props.levelUnit ?? undefined}
    />
  );

  function selectionOf(g: Gesture | null, u: uPlot): DrawModel["selection"] {
    if (g?.type === "select" && Math.abs(g.x1 - g.x0) >= 2) return { x0: g.x0, x1: g.x1, kind: "zoom" };
    if (g?.type === "mark" && g.kind === "span" && Math.abs(g.x1 - g.x0) >= 2) return { x0: g.x0, x1: g.x1, kind: "mark" };
    void u;
    return null;
  }

  function attachGestures(u: uPlot): () => void {
    const over = u.over;
    over.style.touchAction = "none";
    over.style.cursor = "crosshair";
    const plotW = () => u.bbox.width / (uPlot.pxRatio || 1);
    const local = (e: { clientX: number; clientY: number }) => {
      const r = over.getBoundingClientRect();
      return { x: e.clientX - r.left, y: e.clientY - r.top };
    };
    const frame = (): PlotFrame => ({
      left: 0,
      top: 0,
      width: plotW(),
      height: u.bbox.height / (uPlot.pxRatio || 1),
      x: (t) => u.valToPos(t, "x"),
      y: (v) => u.valToPos(v, "y"),
    });
    const tAt = (x: number) => pxToTime(p.current.view, x, plotW());
    const vAt = (y: number) => u.posToVal(y, "y");
    const redraw = () => u.redraw(false, false);

    const cursorHit = (x: number, y: number, touch: boolean): CursorHandle | null => {
      const c = p.current.model.cursors;
      return c ? hitTestCursors(c, x, y, frame(), touch ? 20 : 8) : null;
    };
    const annotationHit = (x: number, y: number, touch: boolean): string | null =>
      hitTestAnnotations(annotationShapes(p.current.model.annotations, frame()), x, y, frame(), touch ? 16 : 6);

    const down = (e: PointerEvent) => {
      if (e.button !== 0 && e.button !== 1) return;
      const pt = local(e);
      const touch = e.pointerType === "touch" || e.pointerType === "pen";
      over.setPointerCapture?.(e.pointerId);
      if (e.pointerType === "touch") touches.current.set(e.pointerId, pt);
      if (touches.current.size === 2) {
        const [a, b] = [...touches.current.entries()];
        gesture.current = {
          type: "pinch",
          ids: [a[0], b[0]],
          d0: Math.hypot(a[1].x - b[1].x, a[1].y - b[1].y),
          c0: (a[1].x + b[1].x) / 2,
          start: p.current.view,
        };
        redraw();
        return;
      }
      if (touches.current.size > 2) return;
      e.preventDefault();
      const handle = cursorHit(pt.x, pt.y, touch);
      if (handle) gesture.current = { type: "cursor", id: e.pointerId, handle };
      else if (p.current.tool) gesture.current = { type: "mark", id: e.pointerId, kind: p.current.tool, x0: pt.x, y0: pt.y, x1: pt.x, y1: pt.y };
      else if (p.current.panMode || e.shiftKey || e.altKey || e.ctrlKey || e.metaKey || e.button === 1)
        gesture.current = { type: "pan", id: e.pointerId, x0: pt.x, start: p.current.view };
      else gesture.current = { type: "select", id: e.pointerId, x0: pt.x, x1: pt.x, y0: pt.y, touch };
      if (gesture.current.type === "pan") over.style.cursor = "grabbing";
    };

    const move = (e: PointerEvent) => {
      const pt = local(e);
      if (e.pointerType === "touch" && touches.current.has(e.pointerId)) touches.current.set(e.pointerId, pt);
      const g = gesture.current;
      const inside = pt.x >= 0 && pt.y >= 0 && pt.x <= plotW() && pt.y <= u.bbox.height / (uPlot.pxRatio || 1);
      if (e.pointerType === "mouse") hover.current = inside ? pt : null;
      if (inside) p.current.onHover({ t: tAt(pt.x), v: vAt(pt.y) });
      if (!g) {
        if (e.pointerType === "mouse") {
          const h = cursorHit(pt.x, pt.y, false);
          over.style.cursor = h
            ? h[0] === "t"
              ? "col-resize"
              : "row-resize"
            : p.current.panMode
              ? "grab"
              : !p.current.tool && annotationHit(pt.x, pt.y, false)
                ? "pointer"
                : "crosshair";
          redraw();
        }
        return;
      }
      if (g.type === "pinch") {
        const a = touches.current.get(g.ids[0]);
        const b = touches.current.get(g.ids[1]);
        if (!a || !b) return;
        const d1 = Math.hypot(a.x - b.x, a.y - b.y);
        const c1 = (a.x + b.x) / 2;
        const zoomed = pinchWindow(g.start, g.d0, d1, g.c0, plotW());
        p.current.onView(panByPixels(zoomed, c1 - g.c0, plotW()));
        return;
      }
      if ("id" in g && g.id !== e.pointerId) return;
      if (g.type === "select") {
        g.x1 = Math.min(Math.max(pt.x, 0), plotW());
        redraw();
      } else if (g.type === "pan") {
        p.current.onView(panByPixels(g.start, pt.x - g.x0, plotW()));
      } else if (g.type === "cursor") {
        const c = p.current.model.cursors;
        if (!c) return;
        const next = { ...c };
        if (g.handle === "ta" || g.handle === "tb") next[g.handle] = tAt(Math.min(Math.max(pt.x, 0), plotW()));
        else next[g.handle] = vAt(Math.min(Math.max(pt.y, 0), u.bbox.height / (uPlot.pxRatio || 1)));
        p.current.onCursors(next);
      } else if (g.type === "mark") {
        g.x1 = Math.min(Math.max(pt.x, 0), plotW());
        g.y1 = pt.y;
        redraw();
      }
    };

    const up = (e: PointerEvent) => {
      touches.current.delete(e.pointerId);
      const g = gesture.current;
      if (!g) return;
      if (g.type === "pinch") {
        if (!g.ids.includes(e.pointerId)) return;
        gesture.current = null;
        return;
      }
      if (g.id !== e.pointerId) return;
      gesture.current = null;
      over.style.cursor = p.current.panMode ? "grab" : "crosshair";
      const pt = local(e);
      if (g.type === "select") {
        if (Math.abs(g.x1 - g.x0) >= 6) p.current.onView(selectionToWindow(p.current.view, g.x0, g.x1, plotW()));
        else p.current.onPick(annotationHit(g.x0, g.y0, g.touch));
      } else if (g.type === "mark") {
        const x = Math.min(Math.max(pt.x, 0), plotW());
        const y = Math.min(Math.max(pt.y, 0), u.bbox.height / (uPlot.pxRatio || 1));
        if (g.kind === "span") {
          if (Math.abs(g.x1 - g.x0) >= 4) {
            const a = tAt(Math.min(g.x0, g.x1));
            const b = tAt(Math.max(g.x0, g.x1));
            p.current.onMarkGesture({ kind: "span", t0: a, t1: b, px: Math.max(g.x0, g.x1), py: y });
          }
        } else if (g.kind === "pin") p.current.onMarkGesture({ kind: "pin", t0: tAt(g.x0), level: vAt(g.y0), px: x, py: y });
        else if (g.kind === "level") p.current.onMarkGesture({ kind: "level", t0: tAt(g.x0), level: vAt(g.y0), px: x, py: y });
        else p.current.onMarkGesture({ kind: "note", t0: tAt(g.x0), px: x, py: y });
      }
      redraw();
    };

    const cancel = (e: PointerEvent) => {
      touches.current.delete(e.pointerId);
      gesture.current = null;
      redraw();
    };

    const leave = (e: PointerEvent) => {
      if (e.pointerType === "mouse") {
        hover.current = null;
        redraw();
      }
      if (!gesture.current) p.current.onHover(null);
    };

    const wheel = (e: WheelEvent) => {
      if (e.deltaY === 0) return;
      e.preventDefault();
      const pt = local(e);
      const at = tAt(Math.min(Math.max(pt.x, 0), plotW()));
      const f = wheelFactor(e.deltaY, e.deltaMode);
      p.current.onView(zoomAround(p.current.view, f, at));
    };

    over.addEventListener("pointerdown", down);
    over.addEventListener("pointermove", move);
    over.addEventListener("pointerup", up);
    over.addEventListener("pointercancel", cancel);
    over.addEventListener("pointerleave", leave);
    over.addEventListener("wheel", wheel, { passive: false });
    return () => {
      over.removeEventListener("pointerdown", down);
      over.removeEventListener("pointermove", move);
      over.removeEventListener("pointerup", up);
      over.removeEventListener("pointercancel", cancel);
      over.removeEventListener("pointerleave", leave);
      over.removeEventListener("wheel", wheel);
    };
  }
}
