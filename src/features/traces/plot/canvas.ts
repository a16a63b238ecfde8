/**
 * Canvas helpers shared by the plot's layer plugins: the plot area in canvas pixels with value →
 * pixel maps, clipping to it, and the two label shapes (a chip and a pennant at the left edge).
 */
import uPlot from "uplot";

const FONT = '"Merriweather Sans", ui-sans-serif, system-ui, sans-serif';

/** Canvas px per CSS px, as uPlot uses it for this chart. */
export function pixelRatio(): number {
  return uPlot.pxRatio || (typeof window !== "undefined" ? window.devicePixelRatio : 1) || 1;
}

/** Keeps far-off pixels finite and small so canvas paths stay well-behaved. */
export const clampPx = (v: number, lo: number, hi: number) =>
  Number.isFinite(v) ? Math.min(Math.max(v, lo - 1e4), hi + 1e4) : NaN;

/** The plot area in canvas px, its scales and value → canvas px maps. */
export interface CanvasFrame {
  u: uPlot;
  ctx: CanvasRenderingContext2D;
  pr: number;
  left: number;
  top: number;
  width: number;
  height: number;
  right: number;
  bottom: number;
  yMin: number;
  yMax: number;
  X: (t: number) => number;
  Y: (v: number) => number;
}

export function canvasFrame(u: uPlot): CanvasFrame {
  const { left, top, width, height } = u.bbox;
  const right = left + width;
  const bottom = top + height;
  return {
    u,
    ctx: u.ctx,
    pr: pixelRatio(),
    left,
    top,
    width,
    height,
    right,
    bottom,
    yMin: u.scales.y.min ?? 0,
    yMax: u.scales.y.max ?? 1,
    X: (t) => clampPx(u.valToPos(t, "x", true), left, right),
    Y: (v) => clampPx(u.valToPos(v, "y", true), top, bottom),
  };
}

/** Runs `draw` clipped to the plot area, with the context's state restored after. */
export function inPlotArea(u: uPlot, draw: (f: CanvasFrame) => void): void {
  const f = canvasFrame(u);
  f.ctx.save();
  f.ctx.beginPath();
  f.ctx.rect(f.left, f.top, f.width, f.height);
  f.ctx.clip();
  try {
    draw(f);
  } finally {
    f.ctx.restore();
  }
}

export function setFont(f: CanvasFrame, px: number, weight = 400): void {
  f.ctx.font = `${weight} ${Math.round(px * f.pr)}px ${FONT}`;
}

/** " ▲" / " ▼" when a level lies above / below the visible range. */
export function offscreen(f: CanvasFrame, v: number): string {
  return v > f.yMax ? " ▲" : v < f.yMin ? " ▼" : "";
}

export interface ChipStyle {
  color: string;
  fill?: string;
  textColor?: string;
  align?: "left" | "right" | "center";
  dashed?: boolean;
}

/** Size of a chip's box for a text, canvas px. */
export function chipSize(f: CanvasFrame, text: string): { w: number; h: number } {
  setFont(f, 11, 600);
  return { w: f.ctx.measureText(text).width + 8 * f.pr, h: 16 * f.pr };
}

/** A rounded label box at (x, y) (top-left, or aligned), kept inside the plot. */
export function chip(f: CanvasFrame, text: string, x: number, y: number, s: ChipStyle) {
  const { ctx, pr } = f;
  const { w, h } = chipSize(f, text);
  let x0 = s.align === "right" ? x - w : s.align === "center" ? x - w / 2 : x;
  x0 = Math.min(Math.max(x0, f.left + 1), f.right - w - 1);
  const y0 = Math.min(Math.max(y, f.top + 1), f.bottom - h - 1);
  ctx.beginPath();
  ctx.roundRect(x0, y0, w, h, 3 * pr);
  ctx.fillStyle = s.fill ?? "rgba(255,255,255,0.92)";
  ctx.fill();
  ctx.lineWidth = 1 * pr;
  ctx.setLineDash(s.dashed ? [3 * pr, 2 * pr] : []);
  ctx.strokeStyle = s.color;
  ctx.stroke();
  ctx.setLineDash([]);
  ctx.fillStyle = s.textColor ?? "#1e2a32";
  ctx.textBaseline = "middle";
  ctx.textAlign = "left";
  ctx.fillText(text, x0 + 4 * pr, y0 + h / 2 + 0.5 * pr);
  return { x: x0, y: y0, w, h };
}

/** A small pennant pointing into the plot from x at height y; returns its width. */
export function pennant(
  f: CanvasFrame,
  text: string,
  y: number,
  x: number,
  color: string,
  textColor = "#ffffff",
): number {
  const { ctx, pr } = f;
  setFont(f, 10, 700);
  const h = 14 * pr;
  const w = ctx.measureText(text).width + 8 * pr;
  const tip = 5 * pr;
  const yc = Math.min(Math.max(y, f.top + h / 2), f.bottom - h / 2);
  ctx.beginPath();
  ctx.moveTo(x, yc - h / 2);
  ctx.lineTo(x + w, yc - h / 2);
  ctx.lineTo(x + w + tip, yc);
  ctx.lineTo(x + w, yc + h / 2);
  ctx.lineTo(x, yc + h / 2);
  ctx.closePath();
  ctx.fillStyle = color;
  ctx.fill();
  ctx.fillStyle = textColor;
  ctx.textAlign = "left";
  ctx.textBaseline = "middle";
  ctx.fillText(text, x + 4 * pr, yc + 0.5 * pr);
  return w + tip;
}

/** A vertical line across the plot at canvas x. */
export function vline(f: CanvasFrame, x: number, from = f.top, to = f.bottom): void {
  f.ctx.beginPath();
  f.ctx.moveTo(x, from);
  f.ctx.lineTo(x, to);
  f.ctx.stroke();
}

/** A horizontal line across the plot at canvas y. */
export function hline(f: CanvasFrame, y: number): void {
  f.ctx.beginPath();
  f.ctx.moveTo(f.left, y);
  f.ctx.lineTo(f.right, y);
  f.ctx.stroke();
}
