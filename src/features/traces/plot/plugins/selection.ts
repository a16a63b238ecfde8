/** Layer plugin: the range being dragged out (a zoom, or a span mark). */
import type uPlot from "uplot";
import { PLOT_COLORS } from "../../lib/palette";
import { inPlotArea } from "../canvas";
import type { GetPlotState } from "../model";

export function selectionPlugin(get: GetPlotState): uPlot.Plugin {
  return {
    hooks: {
      draw: (u) => {
        const s = get().selection;
        if (!s) return;
        inPlotArea(u, (f) => {
          const x0 = f.left + Math.min(s.x0, s.x1) * f.pr;
          const w = Math.abs(s.x1 - s.x0) * f.pr;
          f.ctx.fillStyle = PLOT_COLORS.select;
          f.ctx.fillRect(x0, f.top, w, f.height);
          f.ctx.strokeStyle = PLOT_COLORS.selectEdge;
          f.ctx.lineWidth = 1 * f.pr;
          f.ctx.strokeRect(x0, f.top, w, f.height);
        });
      },
    },
  };
}
