/**
 * Layer plugin: the grid's backdrop and levels — the light plot area (under uPlot's grid lines),
 * the ground line with its "0 V" pennant, the recorded trigger level and trigger time, the frame.
 */
import type uPlot from "uplot";
import { PLOT_COLORS, withAlpha } from "../../lib/palette";
import { canvasFrame, hline, inPlotArea, offscreen, pennant, type CanvasFrame } from "../canvas";
import type { GetPlotState } from "../model";

function drawGround(f: CanvasFrame): void {
  const y = f.Y(0);
  if (0 >= f.yMin && 0 <= f.yMax) {
    f.ctx.lineWidth = 1 * f.pr;
    f.ctx.strokeStyle = withAlpha(PLOT_COLORS.ground, 0.45);
    hline(f, Math.round(y) + 0.5);
  }
  pennant(f, "0 V" + offscreen(f, 0), y, f.left, PLOT_COLORS.ground);
}

function drawTriggerLevel(f: CanvasFrame, level: number): void {
  const { ctx, pr } = f;
  const y = f.Y(level);
  const x = Math.abs(y - f.Y(0)) < 16 * pr ? f.left + 44 * pr : f.left;
  const w = pennant(f, "T" + offscreen(f, level), y, x, PLOT_COLORS.trigger, "#1e2a32");
  if (level < f.yMin || level > f.yMax) return;
  ctx.beginPath();
  ctx.setLineDash([4 * pr, 3 * pr]);
  ctx.moveTo(x + w, Math.round(y) + 0.5);
  ctx.lineTo(x + w + 36 * pr, Math.round(y) + 0.5);
  ctx.strokeStyle = PLOT_COLORS.trigger;
  ctx.lineWidth = 1.5 * pr;
  ctx.stroke();
  ctx.setLineDash([]);
}

function drawTriggerTime(f: CanvasFrame, t: number): void {
  const x = f.X(t);
  if (!(x >= f.left && x <= f.right)) return;
  const s = 6 * f.pr;
  f.ctx.beginPath();
  f.ctx.moveTo(x - s, f.top);
  f.ctx.lineTo(x + s, f.top);
  f.ctx.lineTo(x, f.top + s * 1.3);
  f.ctx.closePath();
  f.ctx.fillStyle = PLOT_COLORS.trigger;
  f.ctx.fill();
}

export function levelsPlugin(get: GetPlotState): uPlot.Plugin {
  return {
    hooks: {
      drawClear: (u) => {
        const f = canvasFrame(u);
        f.ctx.save();
        f.ctx.fillStyle = PLOT_COLORS.area;
        f.ctx.fillRect(f.left, f.top, f.width, f.height);
        f.ctx.restore();
      },
      draw: (u) => {
        const m = get();
        inPlotArea(u, (f) => {
          drawGround(f);
          if (m.triggerLevel != null) drawTriggerLevel(f, m.triggerLevel);
          if (m.triggerTime != null) drawTriggerTime(f, m.triggerTime);
        });
        const f = canvasFrame(u);
        f.ctx.save();
        f.ctx.strokeStyle = PLOT_COLORS.gridMajor;
        f.ctx.lineWidth = 1;
        f.ctx.strokeRect(f.left + 0.5, f.top + 0.5, f.width - 1, f.height - 1);
        f.ctx.restore();
      },
    },
  };
}
