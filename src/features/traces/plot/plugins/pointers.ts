/**
 * Layer plugin: pointers. Another participant's pointer is a small cross at its place; their name
 * goes beside it where it covers no trace (lib/pointer-label), so the expert's label never hides
 * what they point at. The local mouse shows a faint crosshair.
 */
import type uPlot from "uplot";
import type { RemotePointer } from "../../types";
import { PLOT_COLORS, withAlpha } from "../../lib/palette";
import { bandBetween } from "../../lib/snap";
import { placePointerLabel, type BandPx } from "../../lib/pointer-label";
import { chip, chipSize, hline, inPlotArea, vline, type CanvasFrame } from "../canvas";
import type { GetPlotState, TraceLayer } from "../model";

/** The traces' band (canvas px) under columns [x0, x1], across every layer shown. */
export function bandPx(f: CanvasFrame, layers: TraceLayer[]): BandPx {
  return (x0, x1) => {
    const ta = f.u.posToVal((x0 - f.left) / f.pr, "x");
    const tb = f.u.posToVal((x1 - f.left) / f.pr, "x");
    let top = Infinity;
    let bottom = -Infinity;
    for (const l of layers) {
      const b = bandBetween(l, ta, tb);
      if (!b) continue;
      top = Math.min(top, f.Y(b.hi));
      bottom = Math.max(bottom, f.Y(b.lo));
    }
    // the band's stroke is drawn 1.4 px wide: keep a pixel more clear
    return top <= bottom ? { top: top - 2 * f.pr, bottom: bottom + 2 * f.pr } : null;
  };
}

function drawCross(f: CanvasFrame, x: number, y: number, color: string): void {
  const { ctx, pr } = f;
  const arm = 9 * pr;
  ctx.strokeStyle = color;
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
}

function drawPointer(f: CanvasFrame, p: RemotePointer, band: BandPx): void {
  const x = f.X(p.t);
  const y = f.Y(p.v);
  if (!(x >= f.left && x <= f.right && y >= f.top && y <= f.bottom)) return;
  drawCross(f, x, y, p.color);
  const { w, h } = chipSize(f, p.name);
  const at = placePointerLabel(x, y, w, h, f, band, 4 * f.pr);
  chip(f, p.name, at.x, at.y, { color: p.color, fill: p.color, textColor: "#ffffff" });
}

function drawHover(f: CanvasFrame, h: { x: number; y: number }): void {
  f.ctx.strokeStyle = withAlpha(PLOT_COLORS.axis, 0.35);
  f.ctx.lineWidth = 1 * f.pr;
  vline(f, Math.round(f.left + h.x * f.pr) + 0.5);
  hline(f, Math.round(f.top + h.y * f.pr) + 0.5);
}

export function pointersPlugin(get: GetPlotState): uPlot.Plugin {
  return {
    hooks: {
      draw: (u) => {
        const m = get();
        inPlotArea(u, (f) => {
          const band = bandPx(f, m.layers);
          for (const p of m.pointers) drawPointer(f, p, band);
          if (m.hover) drawHover(f, m.hover);
        });
      },
    },
  };
}
