/**
 * Where another participant's name label goes beside their pointer so that it never covers the
 * trace: the label is a box of w × h px; the trace's band under the label's columns is known in px
 * (top = smaller y). Candidates are tried right then left of the pointer, each just above the band,
 * just below it, at the plot's top edge and at its bottom edge; the first that stays inside the
 * plot and clear of the band, nearest to the pointer's height, wins. Pure; any px unit.
 */

export interface Box {
  x: number;
  y: number;
  w: number;
  h: number;
}

export interface PlotRect {
  left: number;
  top: number;
  right: number;
  bottom: number;
}

/** The band's vertical extent (px, top < bottom) under columns [x0, x1], or null where there is no trace. */
export type BandPx = (x0: number, x1: number) => { top: number; bottom: number } | null;

export interface LabelPlacement extends Box {
  /** true when no position clear of the trace exists (the band fills the plot's height) */
  overlaps: boolean;
}

const overlapY = (b: Box, band: { top: number; bottom: number } | null) =>
  band ? Math.max(0, Math.min(b.y + b.h, band.bottom) - Math.max(b.y, band.top)) : 0;

/** Position of a w × h label for a pointer at (px, py) inside `plot`, clear of the band if possible. */
export function placePointerLabel(
  px: number,
  py: number,
  w: number,
  h: number,
  plot: PlotRect,
  band: BandPx,
  gap = 4,
): LabelPlacement {
  // beside the pointer, right or left, where the label fits without covering the pointer itself
  const fits = [px + 8, px - 8 - w].filter((x) => x >= plot.left + 1 && x + w <= plot.right - 1);
  const xs = fits.length ? fits : [Math.min(Math.max(px + 8, plot.left + 1), plot.right - w - 1)];
  let best: LabelPlacement | null = null;
  let bestCost = Infinity;
  for (const x of xs) {
    const under = band(x, x + w);
    const ys = [
      under ? under.top - gap - h : null,
      under ? under.bottom + gap : null,
      plot.top + 2,
      plot.bottom - h - 2,
      py + 6,
    ];
    for (const y of ys) {
      if (y == null || y < plot.top || y + h > plot.bottom) continue;
      const box = { x, y, w, h };
      const cover = overlapY(box, under);
      // clear of the trace first, then nearest to the pointer; right of the pointer on a tie
      const cost = cover * 1e6 + Math.abs(y + h / 2 - py) + (x < px ? 0.5 : 0);
      if (cost < bestCost) {
        bestCost = cost;
        best = { ...box, overlaps: cover > 0 };
      }
    }
  }
  return best ?? { x: xs[0], y: Math.max(plot.top, Math.min(py + 6, plot.bottom - h)), w, h, overlaps: true };
}
