/**
 * The plot's gestures on uPlot's overlay: drag to zoom, pan (Pan mode, Shift, a modifier or the
 * middle button), two-finger pinch, wheel zoom, dragging cursors, making marks with the armed tool,
 * picking a mark by a click. They read the surface's latest props through `host.props()` and report
 * through its callbacks; what is in progress (the selection, the hover) is kept here and drawn by
 * the layer plugins.
 */
import uPlot from "uplot";
import type { AnnotationKind } from "../types";
import type { CursorPositions } from "../lib/readout";
import {
  annotationShapes,
  hitTestAnnotations,
  hitTestCursors,
  type CursorHandle,
  type PlotFrame,
} from "../lib/overlay-geometry";
import { panByPixels, pinchWindow, pxToTime, selectionToWindow, wheelFactor, zoomAround, type Span } from "../lib/zoom";
import type { PlotModel, PlotTransient } from "./model";
import { pinLevel } from "./pin-level";

export interface MarkGesture {
  kind: AnnotationKind;
  t0: number;
  t1?: number;
  /** where the pointer was, in the channel's unit (a pin is snapped to the trace by the viewer) */
  level?: number;
  /** where the gesture ended, CSS px relative to the plot area (to place the label prompt) */
  px: number;
  py: number;
  /** Shift was held: the tool stays armed for the next mark */
  keepArmed: boolean;
}

export interface GestureProps {
  view: Span;
  model: PlotModel;
  tool: AnnotationKind | null;
  panMode: boolean;
  onView: (w: Span) => void;
  onCursors: (c: CursorPositions) => void;
  onMarkGesture: (g: MarkGesture) => void;
  onPick: (id: string | null) => void;
  onHover: (p: { t: number; v: number } | null) => void;
}

export interface GestureHost {
  props: () => GestureProps;
  transient: PlotTransient;
}

type Gesture =
  | { type: "select"; id: number; x0: number; x1: number; y0: number; touch: boolean }
  | { type: "pan"; id: number; x0: number; start: Span }
  | { type: "cursor"; id: number; handle: CursorHandle }
  | { type: "mark"; id: number; kind: AnnotationKind; x0: number; y0: number; x1: number; y1: number; shift: boolean }
  | { type: "pinch"; ids: [number, number]; d0: number; c0: number; start: Span };

type Pt = { x: number; y: number };

/** One plot's gesture state and its helpers (pixel ↔ value maps, hit tests). */
interface Ctx {
  u: uPlot;
  host: GestureHost;
  touches: Map<number, Pt>;
  gesture: Gesture | null;
}

const pr = () => uPlot.pxRatio || 1;
const plotW = (c: Ctx) => c.u.bbox.width / pr();
const plotH = (c: Ctx) => c.u.bbox.height / pr();
const clampX = (c: Ctx, x: number) => Math.min(Math.max(x, 0), plotW(c));
const clampY = (c: Ctx, y: number) => Math.min(Math.max(y, 0), plotH(c));
const tAt = (c: Ctx, x: number) => pxToTime(c.host.props().view, x, plotW(c));
const vAt = (c: Ctx, y: number) => c.u.posToVal(y, "y");

function local(c: Ctx, e: { clientX: number; clientY: number }): Pt {
  const r = c.u.over.getBoundingClientRect();
  return { x: e.clientX - r.left, y: e.clientY - r.top };
}

function frame(c: Ctx): PlotFrame {
  return {
    left: 0,
    top: 0,
    width: plotW(c),
    height: plotH(c),
    x: (t) => c.u.valToPos(t, "x"),
    y: (v) => c.u.valToPos(v, "y"),
  };
}

function redraw(c: Ctx): void {
  c.host.transient.selection = selectionOf(c.gesture);
  c.u.redraw(false, false);
}

function cursorHit(c: Ctx, pt: Pt, touch: boolean): CursorHandle | null {
  const cur = c.host.props().model.cursors;
  return cur ? hitTestCursors(cur, pt.x, pt.y, frame(c), touch ? 20 : 8) : null;
}

function annotationHit(c: Ctx, pt: Pt, touch: boolean): string | null {
  const m = c.host.props().model;
  const placed = m.annotations.map((a) => (a.kind === "pin" ? { ...a, level: pinLevel(a, m.layers) } : a));
  return hitTestAnnotations(annotationShapes(placed, frame(c)), pt.x, pt.y, frame(c), touch ? 16 : 6);
}

function down(c: Ctx, e: PointerEvent): void {
  if (e.button !== 0 && e.button !== 1) return;
  const pt = local(c, e);
  const touch = e.pointerType === "touch" || e.pointerType === "pen";
  c.u.over.setPointerCapture?.(e.pointerId);
  if (e.pointerType === "touch") c.touches.set(e.pointerId, pt);
  if (c.touches.size === 2) {
    const [a, b] = [...c.touches.entries()];
    c.gesture = {
      type: "pinch",
      ids: [a[0], b[0]],
      d0: Math.hypot(a[1].x - b[1].x, a[1].y - b[1].y),
      c0: (a[1].x + b[1].x) / 2,
      start: c.host.props().view,
    };
    return redraw(c);
  }
  if (c.touches.size > 2) return;
  e.preventDefault();
  const p = c.host.props();
  const handle = cursorHit(c, pt, touch);
  if (handle) c.gesture = { type: "cursor", id: e.pointerId, handle };
  else if (p.tool)
    c.gesture = {
      type: "mark",
      id: e.pointerId,
      kind: p.tool,
      x0: pt.x,
      y0: pt.y,
      x1: pt.x,
      y1: pt.y,
      shift: e.shiftKey,
    };
  else if (p.panMode || e.shiftKey || e.altKey || e.ctrlKey || e.metaKey || e.button === 1)
    c.gesture = { type: "pan", id: e.pointerId, x0: pt.x, start: p.view };
  else c.gesture = { type: "select", id: e.pointerId, x0: pt.x, x1: pt.x, y0: pt.y, touch };
  if (c.gesture.type === "pan") c.u.over.style.cursor = "grabbing";
}

function hoverCursor(c: Ctx, pt: Pt): string {
  const p = c.host.props();
  const h = cursorHit(c, pt, false);
  if (h) return h[0] === "t" ? "col-resize" : "row-resize";
  if (p.panMode) return "grab";
  return !p.tool && annotationHit(c, pt, false) ? "pointer" : "crosshair";
}

function movePinch(c: Ctx, g: Extract<Gesture, { type: "pinch" }>): void {
  const a = c.touches.get(g.ids[0]);
  const b = c.touches.get(g.ids[1]);
  if (!a || !b) return;
  const zoomed = pinchWindow(g.start, g.d0, Math.hypot(a.x - b.x, a.y - b.y), g.c0, plotW(c));
  c.host.props().onView(panByPixels(zoomed, (a.x + b.x) / 2 - g.c0, plotW(c)));
}

function moveCursor(c: Ctx, handle: CursorHandle, pt: Pt): void {
  const cur = c.host.props().model.cursors;
  if (!cur) return;
  const next = { ...cur };
  if (handle === "ta" || handle === "tb") next[handle] = tAt(c, clampX(c, pt.x));
  else next[handle] = vAt(c, clampY(c, pt.y));
  c.host.props().onCursors(next);
}

function move(c: Ctx, e: PointerEvent): void {
  const pt = local(c, e);
  if (e.pointerType === "touch" && c.touches.has(e.pointerId)) c.touches.set(e.pointerId, pt);
  const inside = pt.x >= 0 && pt.y >= 0 && pt.x <= plotW(c) && pt.y <= plotH(c);
  if (e.pointerType === "mouse") c.host.transient.hover = inside ? pt : null;
  if (inside) c.host.props().onHover({ t: tAt(c, pt.x), v: vAt(c, pt.y) });
  const g = c.gesture;
  if (!g) {
    if (e.pointerType !== "mouse") return;
    c.u.over.style.cursor = hoverCursor(c, pt);
    return redraw(c);
  }
  if (g.type === "pinch") return movePinch(c, g);
  if (g.id !== e.pointerId) return;
  if (g.type === "pan") return c.host.props().onView(panByPixels(g.start, pt.x - g.x0, plotW(c)));
  if (g.type === "cursor") return moveCursor(c, g.handle, pt);
  g.x1 = clampX(c, pt.x);
  if (g.type === "mark") g.y1 = pt.y;
  redraw(c);
}

/** A mark gesture ends: its mark (Shift at either end keeps the tool armed). */
function finishMark(c: Ctx, g: Extract<Gesture, { type: "mark" }>, pt: Pt, shift: boolean): void {
  const x = clampX(c, pt.x);
  const y = clampY(c, pt.y);
  const keepArmed = g.shift || shift;
  const p = c.host.props();
  if (g.kind === "span") {
    if (Math.abs(g.x1 - g.x0) < 4) return;
    const t0 = tAt(c, Math.min(g.x0, g.x1));
    const t1 = tAt(c, Math.max(g.x0, g.x1));
    p.onMarkGesture({ kind: "span", t0, t1, px: Math.max(g.x0, g.x1), py: y, keepArmed });
  } else if (g.kind === "note") p.onMarkGesture({ kind: "note", t0: tAt(c, g.x0), px: x, py: y, keepArmed });
  else p.onMarkGesture({ kind: g.kind, t0: tAt(c, g.x0), level: vAt(c, g.y0), px: x, py: y, keepArmed });
}

function up(c: Ctx, e: PointerEvent): void {
  c.touches.delete(e.pointerId);
  const g = c.gesture;
  if (!g) return;
  if (g.type === "pinch") {
    if (g.ids.includes(e.pointerId)) c.gesture = null;
    return;
  }
  if (g.id !== e.pointerId) return;
  c.gesture = null;
  const p = c.host.props();
  c.u.over.style.cursor = p.panMode ? "grab" : "crosshair";
  if (g.type === "select") {
    if (Math.abs(g.x1 - g.x0) >= 6) p.onView(selectionToWindow(p.view, g.x0, g.x1, plotW(c)));
    else p.onPick(annotationHit(c, { x: g.x0, y: g.y0 }, g.touch));
  } else if (g.type === "mark") finishMark(c, g, local(c, e), e.shiftKey);
  redraw(c);
}

function cancel(c: Ctx, e: PointerEvent): void {
  c.touches.delete(e.pointerId);
  c.gesture = null;
  redraw(c);
}

function leave(c: Ctx, e: PointerEvent): void {
  if (e.pointerType === "mouse") {
    c.host.transient.hover = null;
    redraw(c);
  }
  if (!c.gesture) c.host.props().onHover(null);
}

function wheel(c: Ctx, e: WheelEvent): void {
  if (e.deltaY === 0) return;
  e.preventDefault();
  const at = tAt(c, clampX(c, local(c, e).x));
  c.host.props().onView(zoomAround(c.host.props().view, wheelFactor(e.deltaY, e.deltaMode), at));
}

/** Attaches the gestures to `u.over`; returns the detach function. */
export function attachGestures(u: uPlot, host: GestureHost): () => void {
  const c: Ctx = { u, host, touches: new Map(), gesture: null };
  u.over.style.touchAction = "none";
  u.over.style.cursor = "crosshair";
  const listeners: [string, EventListener, AddEventListenerOptions?][] = [
    ["pointerdown", (e) => down(c, e as PointerEvent)],
    ["pointermove", (e) => move(c, e as PointerEvent)],
    ["pointerup", (e) => up(c, e as PointerEvent)],
    ["pointercancel", (e) => cancel(c, e as PointerEvent)],
    ["pointerleave", (e) => leave(c, e as PointerEvent)],
    ["wheel", (e) => wheel(c, e as WheelEvent), { passive: false }],
  ];
  for (const [name, fn, opts] of listeners) u.over.addEventListener(name, fn, opts);
  return () => {
    for (const [name, fn] of listeners) u.over.removeEventListener(name, fn);
  };
}

/** The range being dragged, as the selection layer draws it. */
function selectionOf(g: Gesture | null): PlotTransient["selection"] {
  if (g?.type === "select" && Math.abs(g.x1 - g.x0) >= 2) return { x0: g.x0, x1: g.x1, kind: "zoom" };
  if (g?.type === "mark" && g.kind === "span" && Math.abs(g.x1 - g.x0) >= 2)
    return { x0: g.x0, x1: g.x1, kind: "mark" };
  return null;
}
