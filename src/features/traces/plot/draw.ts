/**
 * Canvas drawing of the viewer's layers on top of uPlot's grid: the min/max bands of the traces,
 * ground and trigger markers, analysis events, annotations, cursors, pointers and selections.
 * Called from uPlot's `draw` hook; everything follows the current scales, so zoom and pan move it.
 */
import uPlot from "uplot";
import type { Annotation, AnnotationKind, RemotePointer } from "../types";
import type { CursorPositions } from "../lib/readout";
import type { EventMarker } from "../lib/overlay-geometry";
import { NOTE_FLAG } from "../lib/overlay-geometry";
import { formatTime } from "../lib/units";
import { PLOT_COLORS, withAlpha } from "../lib/palette";

export interface TraceLayer {
  key: string;
  color: string;
  /** display time of each bucket */
  t: ArrayLike<number>;
  min: ArrayLike<number>;
  max: ArrayLike<number>;
  /** secondary channels in overlay mode are drawn lighter */
  faint?: boolean;
}

export interface DrawModel {
  layers: TraceLayer[];
  /** recorded trigger level (channel unit) and trigger time (display time), when known */
  triggerLevel: number | null;
  triggerTime: number | null;
  events: { color: string; markers: EventMarker[] }[];
  /** annotations with display times */
  annotations: Annotation[];
  selectedId: string | null;
  pointers: RemotePointer[];
  cursors: CursorPositions | null;
  /** zoom or span selection in progress: CSS px from the plot's left edge */
  selection: { x0: number; x1: number; kind: "zoom" | "mark" } | null;
  /** preview of a mark awaiting its label (display time) */
  draft: { kind: AnnotationKind; t0: number; t1?: number; level?: number } | null;
  /** mouse position over the plot, CSS px relative to the plot area */
  hover: { x: number; y: number } | null;
}

const FONT = '"Merriweather Sans", ui-sans-serif, system-ui, sans-serif';

/** Canvas px per CSS px, as uPlot uses it for this chart. */
function ratio(): number {
  return uPlot.pxRatio || (typeof window !== "undefined" ? window.devicePixelRatio : 1) || 1;
}

/** Keeps far-off pixels finite and small so canvas paths stay well-behaved. */
const clampPx = (v: number, lo: number, hi: number) => (Number.isFinite(v) ? Math.min(Math.max(v, lo - 1e4), hi + 1e4) : NaN);

export function drawModel(u: uPlot, m: DrawModel): void {
  const ctx = u.ctx;
  const pr = ratio();
  const { left, top, width, height } = u.bbox;
  const right = left + width;
  const bottom = top + height;
  const X = (t: number) => clampPx(u.valToPos(t, "x", true), left, right);
  const Y = (v: number) => clampPx(u.valToPos(v, "y", true), top, bottom);
  const yMin = u.scales.y.min ?? 0;
  const yMax = u.scales.y.max ?? 1;

  ctx.save();
  ctx.beginPath();
  ctx.rect(left, top, width, height);
  ctx.clip();

  // spans lie under the traces
  for (const a of m.annotations) if (a.kind === "span") drawSpan(a, a.id === m.selectedId);

  drawGround();
  for (const l of m.layers) drawLayer(l);
  if (m.triggerLevel != null) drawTriggerLevel(m.triggerLevel);
  if (m.triggerTime != null) drawTriggerTime(m.triggerTime);
  for (const e of m.events) for (const mk of e.markers) drawEvent(mk, e.color);
  for (const a of m.annotations) if (a.kind !== "span") drawMark(a, a.id === m.selectedId);
  if (m.draft) drawDraft(m.draft);
  if (m.cursors) drawCursors(m.cursors);
  if (m.selection) drawSelection(m.selection);
  for (const p of m.pointers) drawPointer(p);
  if (m.hover) drawHover(m.hover);
  ctx.restore();

  function font(px: number, weight = 400) {
    ctx.font = `${weight} ${Math.round(px * pr)}px ${FONT}`;
  }

  function chip(text: string, x: number, y: number, opts: { color: string; fill?: string; textColor?: string; align?: "left" | "right" | "center"; dashed?: boolean }) {
    font(11, 600);
    const padX = 4 * pr;
    const h = 16 * pr;
    const w = ctx.measureText(text).width + padX * 2;
    let x0 = opts.align === "right" ? x - w : opts.align === "center" ? x - w / 2 : x;
    x0 = Math.min(Math.max(x0, left + 1), right - w - 1);
    const y0 = Math.min(Math.max(y, top + 1), bottom - h - 1);
    ctx.beginPath();
    ctx.roundRect(x0, y0, w, h, 3 * pr);
    ctx.fillStyle = opts.fill ?? "rgba(255,255,255,0.92)";
    ctx.fill();
    ctx.lineWidth = 1 * pr;
    ctx.setLineDash(opts.dashed ? [3 * pr, 2 * pr] : []);
    ctx.strokeStyle = opts.color;
    ctx.stroke();
    ctx.setLineDash([]);
    ctx.fillStyle = opts.textColor ?? "#1e2a32";
    ctx.textBaseline = "middle";
    ctx.textAlign = "left";
    ctx.fillText(text, x0 + padX, y0 + h / 2 + 0.5 * pr);
    return { x: x0, y: y0, w, h };
  }

  function tag(text: string, y: number, x: number, color: string, textColor = "#ffffff") {
    // a small pennant pointing into the plot from the left edge
    font(10, 700);
    const h = 14 * pr;
    const w = ctx.measureText(text).width + 8 * pr;
    const tip = 5 * pr;
    const yc = Math.min(Math.max(y, top + h / 2), bottom - h / 2);
    ctx.beginPath();
    ctx.moveTo(x, yc - h / 2);
    ctx.lineTo(x + w, yc - h / 2);
    ctx.lineTo(x + w + tip, yc);
    ctx.lineTo(x + w, yc + h / 2);
    ctx.lineTo(x, yc + h / 2);
    ctx.closePath();
    ctx.fillStyle = color;
    ctx.fill();
    ctx.fillStyle = textColor;
    ctx.textAlign = "left";
    ctx.textBaseline = "middle";
    ctx.fillText(text, x + 4 * pr, yc + 0.5 * pr);
    return w + tip;
  }

  function offscreen(v: number): string {
    return v > yMax ? " ▲" : v < yMin ? " ▼" : "";
  }

  function drawGround() {
    const y = Y(0);
    if (0 >= yMin && 0 <= yMax) {
      ctx.beginPath();
      ctx.moveTo(left, Math.round(y) + 0.5);
      ctx.lineTo(right, Math.round(y) + 0.5);
      ctx.lineWidth = 1 * pr;
      ctx.strokeStyle = withAlpha(PLOT_COLORS.ground, 0.45);
      ctx.stroke();
    }
    tag("0 V" + offscreen(0), y, left, PLOT_COLORS.ground);
  }

  function drawTriggerLevel(level: number) {
    const y = Y(level);
    const groundY = Y(0);
    const x = Math.abs(y - groundY) < 16 * pr ? left + 44 * pr : left;
    const w = tag("T" + offscreen(level), y, x, PLOT_COLORS.trigger, "#1e2a32");
    if (level >= yMin && level <= yMax) {
      ctx.beginPath();
      ctx.setLineDash([4 * pr, 3 * pr]);
      ctx.moveTo(x + w, Math.round(y) + 0.5);
      ctx.lineTo(x + w + 36 * pr, Math.round(y) + 0.5);
      ctx.strokeStyle = PLOT_COLORS.trigger;
      ctx.lineWidth = 1.5 * pr;
      ctx.stroke();
      ctx.setLineDash([]);
    }
  }

  function drawTriggerTime(t: number) {
    const x = X(t);
    if (!(x >= left && x <= right)) return;
    const s = 6 * pr;
    ctx.beginPath();
    ctx.moveTo(x - s, top);
    ctx.lineTo(x + s, top);
    ctx.lineTo(x, top + s * 1.3);
    ctx.closePath();
    ctx.fillStyle = PLOT_COLORS.trigger;
    ctx.fill();
  }

  function drawLayer(l: TraceLayer) {
    const n = Math.min(l.t.length, l.min.length, l.max.length);
    if (n === 0) return;
    const xs = new Float64Array(n);
    const lo = new Float64Array(n);
    const hi = new Float64Array(n);
    for (let k = 0; k < n; k++) {
      xs[k] = X(l.t[k]);
      lo[k] = l.min[k] == null ? NaN : Y(l.min[k]);
      hi[k] = l.max[k] == null ? NaN : Y(l.max[k]);
    }
    // runs of finite buckets
    const runs: [number, number][] = [];
    let s = -1;
    for (let k = 0; k <= n; k++) {
      const ok = k < n && Number.isFinite(xs[k]) && Number.isFinite(lo[k]) && Number.isFinite(hi[k]);
      if (ok && s < 0) s = k;
      if (!ok && s >= 0) {
        runs.push([s, k - 1]);
        s = -1;
      }
    }
    ctx.lineJoin = "round";
    for (const [a, b] of runs) {
      // the band between each bucket's min and max: a spike inside a bucket is never lost
      ctx.beginPath();
      ctx.moveTo(xs[a], hi[a]);
      for (let k = a + 1; k <= b; k++) ctx.lineTo(xs[k], hi[k]);
      for (let k = b; k >= a; k--) ctx.lineTo(xs[k], lo[k]);
      ctx.closePath();
      ctx.fillStyle = withAlpha(l.color, l.faint ? 0.12 : 0.3);
      ctx.fill();
      ctx.lineWidth = (l.faint ? 1 : 1.4) * pr;
      ctx.strokeStyle = l.faint ? withAlpha(l.color, 0.55) : l.color;
      ctx.beginPath();
      ctx.moveTo(xs[a], hi[a]);
      for (let k = a + 1; k <= b; k++) ctx.lineTo(xs[k], hi[k]);
      ctx.stroke();
      ctx.beginPath();
      ctx.moveTo(xs[a], lo[a]);
      for (let k = a + 1; k <= b; k++) ctx.lineTo(xs[k], lo[k]);
      ctx.stroke();
      if (a === b) {
        ctx.beginPath();
        ctx.moveTo(xs[a], hi[a]);
        ctx.lineTo(xs[a], lo[a] + 0.5 * pr);
        ctx.stroke();
      }
    }
  }

  function drawEvent(e: EventMarker, color: string) {
    const x = X(e.tFire);
    ctx.strokeStyle = color;
    ctx.fillStyle = color;
    // firing line: a tick from the top edge and a ring at the peak
    if (x >= left - 2 && x <= right + 2) {
      ctx.lineWidth = 2 * pr;
      ctx.beginPath();
      ctx.moveTo(x, top);
      ctx.lineTo(x, top + 12 * pr);
      ctx.stroke();
      if (e.peakLevel != null && e.peakLevel >= yMin && e.peakLevel <= yMax) {
        ctx.lineWidth = 1.5 * pr;
        ctx.beginPath();
        ctx.arc(x, Y(e.peakLevel), 4 * pr, 0, Math.PI * 2);
        ctx.stroke();
      }
    }
    // spark line: a bracket over the burn time at the burn level
    if (e.tStart != null && e.tEnd != null && e.burnLevel != null) {
      const xs = X(e.tStart);
      const x1 = X(e.tEnd);
      if (x1 < left || xs > right) return;
      const y = Y(e.burnLevel);
      const cap = 5 * pr;
      const yb = y - 7 * pr;
      ctx.lineWidth = 1.5 * pr;
      ctx.beginPath();
      ctx.moveTo(xs, yb + cap);
      ctx.lineTo(xs, yb);
      ctx.lineTo(x1, yb);
      ctx.lineTo(x1, yb + cap);
      ctx.stroke();
      if (e.burnTimeMs != null && x1 - xs > 56 * pr) {
        font(10, 600);
        ctx.textAlign = "center";
        ctx.textBaseline = "bottom";
        const label = formatTime(e.burnTimeMs / 1000);
        const cx = (Math.max(xs, left) + Math.min(x1, right)) / 2;
        ctx.fillStyle = "rgba(255,255,255,0.85)";
        const w = ctx.measureText(label).width + 6 * pr;
        ctx.fillRect(cx - w / 2, yb - 14 * pr, w, 13 * pr);
        ctx.fillStyle = color;
        ctx.fillText(label, cx, yb - 2 * pr);
      }
    }
  }

  function lineStyle(a: { color: string; pending?: boolean }, selected: boolean) {
    ctx.strokeStyle = a.color;
    ctx.lineWidth = (selected ? 3 : 1.75) * pr;
    ctx.setLineDash(a.pending ? [6 * pr, 4 * pr] : []);
  }

  function labelOf(a: Annotation): string {
    const text = (a.label ?? "").trim() || { pin: "pin", span: "span", level: "level", note: "note" }[a.kind];
    const short = text.length > 28 ? text.slice(0, 27) + "…" : text;
    return a.pending ? short + " …" : short;
  }

  function drawSpan(a: Annotation, selected: boolean) {
    if (a.t1 == null) return;
    const x0 = X(Math.min(a.t0, a.t1));
    const x1 = X(Math.max(a.t0, a.t1));
    if (x1 < left || x0 > right) return;
    ctx.fillStyle = withAlpha(a.color, selected ? 0.2 : 0.12);
    ctx.fillRect(x0, top, x1 - x0, height);
    lineStyle(a, selected);
    for (const x of [x0, x1]) {
      ctx.beginPath();
      ctx.moveTo(x, top);
      ctx.lineTo(x, bottom);
      ctx.stroke();
    }
    ctx.setLineDash([]);
    chip(labelOf(a), Math.max(x0, left) + 4 * pr, top + 18 * pr, { color: a.color, dashed: a.pending });
  }

  function drawMark(a: Annotation, selected: boolean) {
    if (a.kind === "level") {
      if (a.level == null) return;
      const y = Y(a.level);
      lineStyle(a, selected);
      ctx.beginPath();
      ctx.moveTo(left, y);
      ctx.lineTo(right, y);
      ctx.stroke();
      ctx.setLineDash([]);
      chip(labelOf(a) + offscreen(a.level), right - 24 * pr, y - 20 * pr, { color: a.color, align: "right", dashed: a.pending });
      return;
    }
    const x = X(a.t0);
    if (x < left - 40 * pr || x > right + 40 * pr) return;
    if (a.kind === "pin") {
      lineStyle(a, selected);
      ctx.beginPath();
      ctx.moveTo(x, top);
      ctx.lineTo(x, bottom);
      ctx.stroke();
      ctx.setLineDash([]);
      if (a.level != null) {
        ctx.beginPath();
        ctx.arc(x, Y(a.level), (selected ? 6 : 5) * pr, 0, Math.PI * 2);
        ctx.fillStyle = a.pending ? "#ffffff" : a.color;
        ctx.fill();
        ctx.lineWidth = 2 * pr;
        ctx.strokeStyle = a.color;
        ctx.setLineDash(a.pending ? [3 * pr, 2 * pr] : []);
        ctx.stroke();
        ctx.setLineDash([]);
      }
      chip(labelOf(a), x + 5 * pr, top + 38 * pr, { color: a.color, dashed: a.pending });
      return;
    }
    // note: a flag on a short pole at the top edge
    const pole = NOTE_FLAG.pole * pr;
    lineStyle(a, selected);
    ctx.beginPath();
    ctx.moveTo(x, top);
    ctx.lineTo(x, top + pole);
    ctx.stroke();
    ctx.setLineDash([]);
    ctx.beginPath();
    ctx.moveTo(x, top + 1 * pr);
    ctx.lineTo(x + NOTE_FLAG.w * pr, top + 1 * pr + (NOTE_FLAG.h * pr) / 2);
    ctx.lineTo(x, top + 1 * pr + NOTE_FLAG.h * pr);
    ctx.closePath();
    ctx.fillStyle = a.pending ? withAlpha(a.color, 0.35) : a.color;
    ctx.fill();
    if (a.pending || selected) {
      ctx.lineWidth = 1.5 * pr;
      ctx.strokeStyle = a.color;
      ctx.setLineDash(a.pending ? [3 * pr, 2 * pr] : []);
      ctx.stroke();
      ctx.setLineDash([]);
    }
    chip(labelOf(a), x + (NOTE_FLAG.w + 4) * pr, top + 2 * pr, { color: a.color, dashed: a.pending });
  }

  function drawDraft(d: NonNullable<DrawModel["draft"]>) {
    const color = PLOT_COLORS.selectEdge;
    ctx.strokeStyle = color;
    ctx.lineWidth = 1.75 * pr;
    ctx.setLineDash([6 * pr, 4 * pr]);
    const x = X(d.t0);
    if (d.kind === "span" && d.t1 != null) {
      const x1 = X(d.t1);
      ctx.fillStyle = PLOT_COLORS.select;
      ctx.fillRect(Math.min(x, x1), top, Math.abs(x1 - x), height);
      ctx.strokeRect(Math.min(x, x1), top, Math.abs(x1 - x), height);
    } else if (d.kind === "level" && d.level != null) {
      ctx.beginPath();
      ctx.moveTo(left, Y(d.level));
      ctx.lineTo(right, Y(d.level));
      ctx.stroke();
    } else {
      ctx.beginPath();
      ctx.moveTo(x, top);
      ctx.lineTo(x, d.kind === "note" ? top + NOTE_FLAG.pole * pr : bottom);
      ctx.stroke();
      if (d.kind === "pin" && d.level != null) {
        ctx.beginPath();
        ctx.arc(x, Y(d.level), 5 * pr, 0, Math.PI * 2);
        ctx.stroke();
      }
    }
    ctx.setLineDash([]);
  }

  function drawCursors(c: CursorPositions) {
    ctx.strokeStyle = PLOT_COLORS.cursor;
    ctx.lineWidth = 1.5 * pr;
    ctx.setLineDash([6 * pr, 4 * pr]);
    const xa = X(c.ta);
    const xb = X(c.tb);
    const ya = Y(c.va);
    const yb = Y(c.vb);
    ctx.beginPath();
    for (const x of [xa, xb]) {
      ctx.moveTo(x, top);
      ctx.lineTo(x, bottom);
    }
    for (const y of [ya, yb]) {
      ctx.moveTo(left, y);
      ctx.lineTo(right, y);
    }
    ctx.stroke();
    ctx.setLineDash([]);
    // grab handles: time cursors at the bottom edge, level cursors at the right edge
    const handle = (x: number, y: number, text: string) => {
      font(10, 700);
      const w = 16 * pr;
      const h = 16 * pr;
      ctx.beginPath();
      ctx.roundRect(x - w / 2, y - h / 2, w, h, 3 * pr);
      ctx.fillStyle = PLOT_COLORS.cursor;
      ctx.fill();
      ctx.fillStyle = "#ffffff";
      ctx.textAlign = "center";
      ctx.textBaseline = "middle";
      ctx.fillText(text, x, y + 0.5 * pr);
    };
    handle(xa, bottom - 10 * pr, "1");
    handle(xb, bottom - 10 * pr, "2");
    handle(right - 10 * pr, ya, "A");
    handle(right - 10 * pr, yb, "B");
  }

  function drawSelection(s: NonNullable<DrawModel["selection"]>) {
    const x0 = left + Math.min(s.x0, s.x1) * pr;
    const w = Math.abs(s.x1 - s.x0) * pr;
    ctx.fillStyle = PLOT_COLORS.select;
    ctx.fillRect(x0, top, w, height);
    ctx.strokeStyle = PLOT_COLORS.selectEdge;
    ctx.lineWidth = 1 * pr;
    ctx.strokeRect(x0, top, w, height);
  }

  function drawPointer(p: RemotePointer) {
    const x = X(p.t);
    const y = Y(p.v);
    if (!(x >= left && x <= right && y >= top && y <= bottom)) return;
    const arm = 9 * pr;
    ctx.strokeStyle = p.color;
    ctx.lineWidth = 2 * pr;
    ctx.beginPath();
    ctx.moveTo(x - arm, y);
    ctx.lineTo(x - 3 * pr, y);
    ctx.moveTo(x + 3 * pr, y);
    ctx.lineTo(x + arm, y);
    ctx.moveTo(x, y - arm);
    ctx.lineTo(x, y - 3 * pr);
    ctx.moveTo(x, y + 3 * pr);
    ctx.lineTo(x, y + arm);
    ctx.stroke();
    chip(p.name, x + 8 * pr, y + 6 * pr, { color: p.color, fill: p.color, textColor: "#ffffff" });
  }

  function drawHover(h: { x: number; y: number }) {
    ctx.strokeStyle = withAlpha(PLOT_COLORS.axis, 0.35);
    ctx.lineWidth = 1 * pr;
    ctx.beginPath();
    const x = Math.round(left + h.x * pr) + 0.5;
    const y = Math.round(top + h.y * pr) + 0.5;
    ctx.moveTo(x, top);
    ctx.lineTo(x, bottom);
    ctx.moveTo(left, y);
    ctx.lineTo(right, y);
    ctx.stroke();
  }
}
