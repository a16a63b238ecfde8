/** The plot's frame around its plot area, CSS px (uPlot's axes and padding). Pure. */

export const Y_AXIS_PX = 60;
export const X_AXIS_PX = 30;
/** top, right, bottom, left padding around the plot area */
export const PADDING: [number, number, number, number] = [10, 28, 0, 0];
export const MIN_PLOT_BOX = 120;

/** The plot area's width for a box width (what uPlot lays out: the box less the level axis and padding). */
export function plotAreaWidth(boxWidth: number): number {
  return Math.max(boxWidth, MIN_PLOT_BOX) - Y_AXIS_PX - PADDING[1] - PADDING[3];
}
