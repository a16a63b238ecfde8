/** Layer plugin: the two time cursors and two level cursors, with their grab handles. */
import type uPlot from "uplot";
import type { CursorPositions } from "../../lib/readout";
import { PLOT_COLORS } from "../../lib/palette";
import { hline, inPlotArea, setFont, vline, type CanvasFrame } from "../canvas";
import type { GetPlotState } from "../model";

function handle(f: CanvasFrame, x: number, y: number, text: string): void {
  const { ctx, pr } = f;
  setFont(f, 10, 700);
  const s = 16 * pr;
  ctx.beginPath();
  ctx.roundRect(x - s / 2, y - s / 2, s, s, 3 * pr);
  ctx.fillStyle = PLOT_COLORS.cursor;
  ctx.fill();
  ctx.fillStyle = "#ffffff";
  ctx.textAlign = "center";
  ctx.textBaseline = "middle";
  ctx.fillText(text, x, y + 0.5 * pr);
}

function drawCursors(f: CanvasFrame, c: CursorPositions): void {
  const { ctx, pr } = f;
  ctx.strokeStyle = PLOT_COLORS.cursor;
  ctx.lineWidth = 1.5 * pr;
  ctx.setLineDash([6 * pr, 4 * pr]);
  const xa = f.X(c.ta);
  const xb = f.X(c.tb);
  const ya = f.Y(c.va);
  const yb = f.Y(c.vb);
  vline(f, xa);
  vline(f, xb);
  hline(f, ya);
  hline(f, yb);
  ctx.setLineDash([]);
  // time cursors are grabbed at the bottom edge, level cursors at the right edge
  handle(f, xa, f.bottom - 10 * pr, "1");
  handle(f, xb, f.bottom - 10 * pr, "2");
  handle(f, f.right - 10 * pr, ya, "A");
  handle(f, f.right - 10 * pr, yb, "B");
}

export function cursorsPlugin(get: GetPlotState): uPlot.Plugin {
  return {
    hooks: {
      draw: (u) => {
        const c = get().cursors;
        if (c) inPlotArea(u, (f) => drawCursors(f, c));
      },
    },
  };
}
