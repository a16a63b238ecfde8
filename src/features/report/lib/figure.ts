/**
 * Geometry of a printed trace figure: the min/max envelope of a window of the trace as an SVG
 * path, and the expert's marks (spans, pins, levels, notes) in the same coordinates. Pure.
 */
export interface FigureWindow {
  t: number[];
  series: { name: string; min: number[]; max: number[] }[];
}

export interface FigureMark {
  id: string;
  kind: "pin" | "span" | "level" | "note";
  t0: number;
  t1: number | null;
  level: number | null;
  label: string | null;
  color: string;
}

export interface FigureBox {
  width: number;
  height: number;
  /** plot margins: left for the volts labels, bottom for the time labels */
  left: number;
  bottom: number;
  top: number;
  right: number;
  /** about how many time labels fit across (default 5) */
  timeTicks?: number;
}

export interface FigureGeometry {
  envelope: string;
  line: string;
  vMin: number;
  vMax: number;
  x: (t: number) => number;
  y: (v: number) => number;
  /**
   * The time labels; `anchor` is the SVG text-anchor that keeps each label inside the figure (the
   * last one ends at its tick instead of being centred on it, where it would run past the edge).
   */
  timeTicks: { x: number; label: string; anchor: "start" | "middle" | "end" }[];
  levelTicks: { y: number; label: string }[];
  /** the marks inside the window; `index` is the mark's place in the list given */
  marks: ((
    | { kind: "span"; x0: number; x1: number }
    | { kind: "pin" | "note"; x: number; y: number | null }
    | { kind: "level"; y: number }
  ) & { index: number })[];
}

/** Half the width of a time label such as "12.5 ms" at the figure's 11 px type (about 6 px a character). */
const LABEL_HALF_WIDTH = 22;

function niceStep(span: number, count: number): number {
  const raw = span / Math.max(1, count);
  const p = 10 ** Math.floor(Math.log10(raw));
  const m = raw / p;
  return (m <= 1 ? 1 : m <= 2 ? 2 : m <= 5 ? 5 : 10) * p;
}

function fmt(x: number, step: number): string {
  const d = Math.max(0, -Math.floor(Math.log10(step)));
  return x.toFixed(Math.min(6, d));
}

/**
 * A window and marks in the file's unit, in the display unit: levels × `factor` (the channel's
 * `fromFile`, shared/trace/units).
 */
export function scaleFigure(
  w: FigureWindow,
  marks: FigureMark[],
  factor: number,
): { window: FigureWindow; marks: FigureMark[] } {
  if (factor === 1) return { window: w, marks };
  return {
    window: {
      t: w.t,
      series: w.series.map((s) => ({
        name: s.name,
        min: s.min.map((x) => x * factor),
        max: s.max.map((x) => x * factor),
      })),
    },
    marks: marks.map((m) => (m.level == null ? m : { ...m, level: m.level * factor })),
  };
}

/** The figure of channel 0 over [t0, t1) in the box; the marks inside the window. */
export function figureGeometry(
  w: FigureWindow,
  marks: FigureMark[],
  t0: number,
  t1: number,
  box: FigureBox,
): FigureGeometry {
  const s = w.series[0] ?? { name: "", min: [], max: [] };
  let vMin = Infinity;
  let vMax = -Infinity;
  for (let i = 0; i < w.t.length; i++) {
    if (s.min[i] < vMin) vMin = s.min[i];
    if (s.max[i] > vMax) vMax = s.max[i];
  }
  for (const m of marks) {
    if (m.level == null || (m.kind !== "level" && m.kind !== "pin")) continue;
    vMin = Math.min(vMin, m.level);
    vMax = Math.max(vMax, m.level);
  }
  if (!Number.isFinite(vMin) || !Number.isFinite(vMax)) {
    vMin = -1;
    vMax = 1;
  }
  if (vMax - vMin < 1e-9) {
    vMin -= 0.5;
    vMax += 0.5;
  }
  const pad = (vMax - vMin) * 0.06;
  vMin -= pad;
  vMax += pad;
  const pw = box.width - box.left - box.right;
  const ph = box.height - box.top - box.bottom;
  const x = (t: number) => box.left + ((t - t0) / (t1 - t0)) * pw;
  const y = (v: number) => box.top + (1 - (v - vMin) / (vMax - vMin)) * ph;
  const r = (n: number) => Math.round(n * 10) / 10;
  let top = "";
  let bottom = "";
  let line = "";
  for (let i = 0; i < w.t.length; i++) {
    const xi = r(x(w.t[i]));
    top += `${i ? "L" : "M"}${xi},${r(y(s.max[i]))}`;
    line += `${i ? "L" : "M"}${xi},${r(y((s.max[i] + s.min[i]) / 2))}`;
  }
  for (let i = w.t.length - 1; i >= 0; i--) bottom += `L${r(x(w.t[i]))},${r(y(s.min[i]))}`;
  const envelope = w.t.length ? `${top}${bottom}Z` : "";
  // time in ms from the window's start
  const spanMs = (t1 - t0) * 1000;
  const ts = niceStep(spanMs, box.timeTicks ?? 5);
  const timeTicks: FigureGeometry["timeTicks"] = [];
  const nearRight = box.width - box.right - LABEL_HALF_WIDTH;
  for (let ms = 0; ms <= spanMs + 1e-9; ms += ts) {
    const tx = r(x(t0 + ms / 1000));
    timeTicks.push({ x: tx, label: `${fmt(ms, ts)} ms`, anchor: tx > nearRight ? "end" : "middle" });
  }
  const vs = niceStep(vMax - vMin, 4);
  const levelTicks: FigureGeometry["levelTicks"] = [];
  for (let v = Math.ceil(vMin / vs) * vs; v <= vMax + 1e-12; v += vs)
    levelTicks.push({ y: r(y(v)), label: fmt(v, vs) });
  const inside = (t: number) => t >= t0 && t <= t1;
  const out: FigureGeometry["marks"] = [];
  marks.forEach((m, index) => {
    if (m.kind === "span") {
      const a = Math.max(t0, Math.min(m.t0, m.t1 ?? m.t0));
      const b = Math.min(t1, Math.max(m.t0, m.t1 ?? m.t0));
      if (b > a) out.push({ kind: "span", x0: r(x(a)), x1: r(x(b)), index });
    } else if (m.kind === "level") {
      if (m.level != null) out.push({ kind: "level", y: r(y(m.level)), index });
    } else if (inside(m.t0))
      out.push({ kind: m.kind, x: r(x(m.t0)), y: m.level != null ? r(y(m.level)) : null, index });
  });
  return { envelope, line, vMin, vMax, x, y, timeTicks, levelTicks, marks: out };
}

/**
 * The window to print for a trace: around its marks when it has any (twice their extent on each
 * side, at least 1 ms); else, for a secondary-ignition capture with measured firings, one firing
 * (from 0.5 ms before the first firing line, 5 ms long: the firing line, the spark line and the coil
 * ringing); else the capture view (ten divisions) from the start. Never past the trace.
 */
export function figureWindow(
  trace: {
    t0?: number;
    durationS: number;
    kind?: string;
    settings: Record<string, unknown>;
    analysis?: { kind?: string; events?: { timeS: number }[] } | null;
  },
  marks: FigureMark[],
): { t0: number; t1: number } {
  const start = trace.t0 ?? 0;
  const end = start + trace.durationS;
  const div =
    typeof trace.settings.timePerDivS === "number" && trace.settings.timePerDivS > 0
      ? (trace.settings.timePerDivS as number)
      : trace.durationS / 10;
  let a: number;
  let b: number;
  const first = trace.analysis?.events?.[0]?.timeS;
  if (marks.length) {
    const lo = Math.min(...marks.map((m) => Math.min(m.t0, m.t1 ?? m.t0)));
    const hi = Math.max(...marks.map((m) => Math.max(m.t0, m.t1 ?? m.t0)));
    const margin = Math.max(2 * (hi - lo), 0.001);
    a = lo - margin;
    b = hi + margin;
  } else if ((trace.analysis?.kind ?? trace.kind) === "secondary-ignition" && typeof first === "number") {
    a = first - 0.0005;
    b = a + 0.005;
  } else {
    a = start;
    b = start + Math.min(trace.durationS, 10 * div);
  }
  if (a < start) {
    b += start - a;
    a = start;
  }
  if (b > end) {
    a -= b - end;
    b = end;
  }
  return { t0: Math.max(start, a), t1: Math.min(end, b) };
}
