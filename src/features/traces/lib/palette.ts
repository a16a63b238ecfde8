/**
 * Burnline's own trace colours, chosen to read on the light plot area (each ≥ 4.5:1 against white)
 * and to stay apart from each other; the first is the "kiln" accent of the app.
 */
export const TRACE_PALETTE = [
  "#a65a12", // kiln, a shade deeper than kiln-600 for contrast
  "#257268", // verdigris-600
  "#3d5a99", // slate blue
  "#8a3d74", // plum
  "#5f6b12", // olive
  "#a2322c", // alarm-600
  "#344450", // ink-700
  "#0f6b8f", // harbour blue
] as const;

export const traceColor = (i: number) =>
  TRACE_PALETTE[((i % TRACE_PALETTE.length) + TRACE_PALETTE.length) % TRACE_PALETTE.length];

/** Plot chrome, from the app palette (styles.css). */
export const PLOT_COLORS = {
  area: "#ffffff",
  grid: "#e4e9ec", // ink-100
  gridMajor: "#c9d3d9", // ink-200
  axis: "#566b77", // ink-500
  ground: "#344450", // ink-700
  trigger: "#d4831f", // kiln-500
  cursor: "#257268", // verdigris-600
  select: "rgba(212, 131, 31, 0.14)",
  selectEdge: "#d4831f",
  event: "#1e2a32", // ink-900
} as const;

/** CSS colour with alpha: "#rrggbb" → "rgba(r, g, b, a)"; other colours are returned unchanged. */
export function withAlpha(color: string, alpha: number): string {
  const m = /^#([0-9a-f]{6})$/i.exec(color.trim());
  if (!m) return color;
  const n = parseInt(m[1], 16);
  return `rgba(${(n >> 16) & 255}, ${(n >> 8) & 255}, ${n & 255}, ${alpha})`;
}
