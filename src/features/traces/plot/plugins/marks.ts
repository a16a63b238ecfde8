/**
 * Layer plugin: the marks other than pins — spans (their fill under the grid and the traces, their
 * edges and label above), level lines and note flags — and the preview of a mark awaiting its label.
 */
import type uPlot from "uplot";
import type { Annotation } from "../../types";
import { NOTE_FLAG } from "../../lib/overlay-geometry";
import { PLOT_COLORS, withAlpha } from "../../lib/palette";
import { chip, hline, inPlotArea, offscreen, vline, type CanvasFrame } from "../canvas";
import type { GetPlotState, MarkPreview } from "../model";

/** The line style of a mark: thicker when selected, dashed while not yet stored. */
export function markLine(f: CanvasFrame, a: { color: string; pending?: boolean }, selected: boolean): void {
  f.ctx.strokeStyle = a.color;
  f.ctx.lineWidth = (selected ? 3 : 1.75) * f.pr;
  f.ctx.setLineDash(a.pending ? [6 * f.pr, 4 * f.pr] : []);
}

/** A mark's label as drawn: its text (or its kind), shortened, with "…" while pending. */
export function markLabel(a: Annotation): string {
  const text = (a.label ?? "").trim() || { pin: "pin", span: "span", level: "level", note: "note" }[a.kind];
  const short = text.length > 28 ? text.slice(0, 27) + "…" : text;
  return a.pending ? short + " …" : short;
}

function spanPx(f: CanvasFrame, a: Annotation): [number, number] | null {
  if (a.t1 == null) return null;
  const x0 = f.X(Math.min(a.t0, a.t1));
  const x1 = f.X(Math.max(a.t0, a.t1));
  return x1 < f.left || x0 > f.right ? null : [x0, x1];
}

function drawSpanFill(f: CanvasFrame, a: Annotation, selected: boolean): void {
  const px = spanPx(f, a);
  if (!px) return;
  f.ctx.fillStyle = withAlpha(a.color, selected ? 0.2 : 0.12);
  f.ctx.fillRect(px[0], f.top, px[1] - px[0], f.height);
}

function drawSpanEdges(f: CanvasFrame, a: Annotation, selected: boolean): void {
  const px = spanPx(f, a);
  if (!px) return;
  markLine(f, a, selected);
  vline(f, px[0]);
  vline(f, px[1]);
  f.ctx.setLineDash([]);
  chip(f, markLabel(a), Math.max(px[0], f.left) + 4 * f.pr, f.top + 18 * f.pr, { color: a.color, dashed: a.pending });
}

function drawLevel(f: CanvasFrame, a: Annotation, selected: boolean): void {
  if (a.level == null) return;
  const y = f.Y(a.level);
  markLine(f, a, selected);
  hline(f, y);
  f.ctx.setLineDash([]);
  chip(f, markLabel(a) + offscreen(f, a.level), f.right - 24 * f.pr, y - 20 * f.pr, {
    color: a.color,
    align: "right",
    dashed: a.pending,
  });
}

/** A note: a flag on a short pole at the top edge. */
function drawNote(f: CanvasFrame, a: Annotation, selected: boolean): void {
  const { ctx, pr } = f;
  const x = f.X(a.t0);
  if (x < f.left - 40 * pr || x > f.right + 40 * pr) return;
  markLine(f, a, selected);
  vline(f, x, f.top, f.top + NOTE_FLAG.pole * pr);
  ctx.setLineDash([]);
  ctx.beginPath();
  ctx.moveTo(x, f.top + 1 * pr);
  ctx.lineTo(x + NOTE_FLAG.w * pr, f.top + 1 * pr + (NOTE_FLAG.h * pr) / 2);
  ctx.lineTo(x, f.top + 1 * pr + NOTE_FLAG.h * pr);
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
  chip(f, markLabel(a), x + (NOTE_FLAG.w + 4) * pr, f.top + 2 * pr, { color: a.color, dashed: a.pending });
}

/** The dashed preview of a span, level or note awaiting its label (a pin's is drawn by the pins layer). */
function drawPreview(f: CanvasFrame, d: MarkPreview): void {
  const { ctx, pr } = f;
  ctx.strokeStyle = PLOT_COLORS.selectEdge;
  ctx.lineWidth = 1.75 * pr;
  ctx.setLineDash([6 * pr, 4 * pr]);
  const x = f.X(d.t0);
  if (d.kind === "span" && d.t1 != null) {
    const x1 = f.X(d.t1);
    ctx.fillStyle = PLOT_COLORS.select;
    ctx.fillRect(Math.min(x, x1), f.top, Math.abs(x1 - x), f.height);
    ctx.strokeRect(Math.min(x, x1), f.top, Math.abs(x1 - x), f.height);
  } else if (d.kind === "level" && d.level != null) hline(f, f.Y(d.level));
  else if (d.kind === "note") vline(f, x, f.top, f.top + NOTE_FLAG.pole * pr);
  ctx.setLineDash([]);
}

export function marksPlugin(get: GetPlotState): uPlot.Plugin {
  return {
    hooks: {
      drawClear: (u) => {
        const m = get();
        inPlotArea(u, (f) =>
          m.annotations.forEach((a) => a.kind === "span" && drawSpanFill(f, a, a.id === m.selectedId)),
        );
      },
      draw: (u) => {
        const m = get();
        inPlotArea(u, (f) => {
          for (const a of m.annotations) {
            const selected = a.id === m.selectedId;
            if (a.kind === "span") drawSpanEdges(f, a, selected);
            else if (a.kind === "level") drawLevel(f, a, selected);
            else if (a.kind === "note") drawNote(f, a, selected);
          }
          if (m.draft && m.draft.kind !== "pin") drawPreview(f, m.draft);
        });
      },
    },
  };
}
