/** Layer plugin: the analysis's events — a firing tick with a ring at the peak, a bracket over each burn. */
import type uPlot from "uplot";
import type { EventMarker } from "../../lib/overlay-geometry";
import { formatTime } from "../../../../lib/trace-units";
import { inPlotArea, setFont, type CanvasFrame } from "../canvas";
import type { GetPlotState } from "../model";

function drawFiring(f: CanvasFrame, e: EventMarker, x: number): void {
  const { ctx, pr } = f;
  ctx.lineWidth = 2 * pr;
  ctx.beginPath();
  ctx.moveTo(x, f.top);
  ctx.lineTo(x, f.top + 12 * pr);
  ctx.stroke();
  if (e.peakLevel == null || e.peakLevel < f.yMin || e.peakLevel > f.yMax) return;
  ctx.lineWidth = 1.5 * pr;
  ctx.beginPath();
  ctx.arc(x, f.Y(e.peakLevel), 4 * pr, 0, Math.PI * 2);
  ctx.stroke();
}

function drawBurn(f: CanvasFrame, e: EventMarker, color: string): void {
  if (e.tStart == null || e.tEnd == null || e.burnLevel == null) return;
  const { ctx, pr } = f;
  const xs = f.X(e.tStart);
  const x1 = f.X(e.tEnd);
  if (x1 < f.left || xs > f.right) return;
  const cap = 5 * pr;
  const yb = f.Y(e.burnLevel) - 7 * pr;
  ctx.lineWidth = 1.5 * pr;
  ctx.beginPath();
  ctx.moveTo(xs, yb + cap);
  ctx.lineTo(xs, yb);
  ctx.lineTo(x1, yb);
  ctx.lineTo(x1, yb + cap);
  ctx.stroke();
  if (e.burnTimeMs == null || x1 - xs <= 56 * pr) return;
  setFont(f, 10, 600);
  ctx.textAlign = "center";
  ctx.textBaseline = "bottom";
  const label = formatTime(e.burnTimeMs / 1000);
  const cx = (Math.max(xs, f.left) + Math.min(x1, f.right)) / 2;
  ctx.fillStyle = "rgba(255,255,255,0.85)";
  const w = ctx.measureText(label).width + 6 * pr;
  ctx.fillRect(cx - w / 2, yb - 14 * pr, w, 13 * pr);
  ctx.fillStyle = color;
  ctx.fillText(label, cx, yb - 2 * pr);
}

export function eventsPlugin(get: GetPlotState): uPlot.Plugin {
  return {
    hooks: {
      draw: (u) =>
        inPlotArea(u, (f) => {
          for (const group of get().events) {
            f.ctx.strokeStyle = group.color;
            f.ctx.fillStyle = group.color;
            for (const e of group.markers) {
              const x = f.X(e.tFire);
              if (x >= f.left - 2 && x <= f.right + 2) drawFiring(f, e, x);
              drawBurn(f, e, group.color);
            }
          }
        }),
    },
  };
}
