/**
 * Layer plugin: pins. A pin stands on its trace: its dot is placed at the trace's level at the pin's
 * time, read from the data on screen at every draw (so it stays on the firing line at any zoom);
 * the stored level only chooses which part of a squeezed bucket it stands on, and places it when
 * no data covers its time.
 */
import type uPlot from "uplot";
import type { Annotation } from "../../types";
import { PLOT_COLORS } from "../../lib/palette";
import { chip, inPlotArea, vline, type CanvasFrame } from "../canvas";
import type { GetPlotState, MarkPreview } from "../model";
import { pinLevel } from "../pin-level";
import { markLabel, markLine } from "./marks";

function drawPin(f: CanvasFrame, a: Annotation, level: number | null, selected: boolean): void {
  const { ctx, pr } = f;
  const x = f.X(a.t0);
  if (x < f.left - 40 * pr || x > f.right + 40 * pr) return;
  markLine(f, a, selected);
  vline(f, x);
  ctx.setLineDash([]);
  if (level != null) {
    ctx.beginPath();
    ctx.arc(x, f.Y(level), (selected ? 6 : 5) * pr, 0, Math.PI * 2);
    ctx.fillStyle = a.pending ? "#ffffff" : a.color;
    ctx.fill();
    ctx.lineWidth = 2 * pr;
    ctx.strokeStyle = a.color;
    ctx.setLineDash(a.pending ? [3 * pr, 2 * pr] : []);
    ctx.stroke();
    ctx.setLineDash([]);
  }
  chip(f, markLabel(a), x + 5 * pr, f.top + 38 * pr, { color: a.color, dashed: a.pending });
}

function drawPinPreview(f: CanvasFrame, d: MarkPreview): void {
  const { ctx, pr } = f;
  const x = f.X(d.t0);
  ctx.strokeStyle = PLOT_COLORS.selectEdge;
  ctx.lineWidth = 1.75 * pr;
  ctx.setLineDash([6 * pr, 4 * pr]);
  vline(f, x);
  if (d.level != null) {
    ctx.beginPath();
    ctx.arc(x, f.Y(d.level), 5 * pr, 0, Math.PI * 2);
    ctx.stroke();
  }
  ctx.setLineDash([]);
}

export function pinsPlugin(get: GetPlotState): uPlot.Plugin {
  return {
    hooks: {
      draw: (u) => {
        const m = get();
        inPlotArea(u, (f) => {
          for (const a of m.annotations)
            if (a.kind === "pin") drawPin(f, a, pinLevel(a, m.layers), a.id === m.selectedId);
          if (m.draft?.kind === "pin") drawPinPreview(f, m.draft);
        });
      },
    },
  };
}
