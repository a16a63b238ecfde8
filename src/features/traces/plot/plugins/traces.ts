/** Layer plugin: each trace's min/max band (a spike inside a bucket is never lost). */
import type uPlot from "uplot";
import { withAlpha } from "../../lib/palette";
import { inPlotArea, type CanvasFrame } from "../canvas";
import type { GetPlotState, TraceLayer } from "../model";

/** Runs [a, b] of consecutive finite buckets. */
function finiteRuns(xs: Float64Array, lo: Float64Array, hi: Float64Array): [number, number][] {
  const runs: [number, number][] = [];
  let s = -1;
  for (let k = 0; k <= xs.length; k++) {
    const ok = k < xs.length && Number.isFinite(xs[k]) && Number.isFinite(lo[k]) && Number.isFinite(hi[k]);
    if (ok && s < 0) s = k;
    if (!ok && s >= 0) {
      runs.push([s, k - 1]);
      s = -1;
    }
  }
  return runs;
}

function polyline(ctx: CanvasRenderingContext2D, xs: Float64Array, ys: Float64Array, a: number, b: number) {
  ctx.beginPath();
  ctx.moveTo(xs[a], ys[a]);
  for (let k = a + 1; k <= b; k++) ctx.lineTo(xs[k], ys[k]);
  ctx.stroke();
}

export function drawLayer(f: CanvasFrame, l: TraceLayer): void {
  const { ctx, pr } = f;
  const n = Math.min(l.t.length, l.min.length, l.max.length);
  if (n === 0) return;
  const xs = new Float64Array(n);
  const lo = new Float64Array(n);
  const hi = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    xs[k] = f.X(l.t[k]);
    lo[k] = l.min[k] == null ? NaN : f.Y(l.min[k]);
    hi[k] = l.max[k] == null ? NaN : f.Y(l.max[k]);
  }
  ctx.lineJoin = "round";
  for (const [a, b] of finiteRuns(xs, lo, hi)) {
    ctx.beginPath();
    ctx.moveTo(xs[a], hi[a]);
    for (let k = a + 1; k <= b; k++) ctx.lineTo(xs[k], hi[k]);
    for (let k = b; k >= a; k--) ctx.lineTo(xs[k], lo[k]);
    ctx.closePath();
    ctx.fillStyle = withAlpha(l.color, l.faint ? 0.12 : 0.3);
    ctx.fill();
    ctx.lineWidth = (l.faint ? 1 : 1.4) * pr;
    ctx.strokeStyle = l.faint ? withAlpha(l.color, 0.55) : l.color;
    polyline(ctx, xs, hi, a, b);
    polyline(ctx, xs, lo, a, b);
    if (a === b) {
      ctx.beginPath();
      ctx.moveTo(xs[a], hi[a]);
      ctx.lineTo(xs[a], lo[a] + 0.5 * pr);
      ctx.stroke();
    }
  }
}

export function tracesPlugin(get: GetPlotState): uPlot.Plugin {
  return {
    hooks: {
      draw: (u) => inPlotArea(u, (f) => get().layers.forEach((l) => drawLayer(f, l))),
    },
  };
}
