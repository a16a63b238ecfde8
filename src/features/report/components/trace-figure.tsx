import { useEffect, useMemo, useRef, useState, type RefObject } from "react";
import { useReportWindow } from "../api/get-window";
import { figureGeometry, figureWindow, scaleFigure, type FigureMark } from "../lib/figure";
import type { ReportTrace } from "../api/get-report";
import { formatLevel, traceUnits, unitSentence } from "../../../lib/trace-units";

/**
 * The figure's frame for a drawing `width` pixels wide: one SVG unit is one screen pixel, so its
 * 11 px type stays 11 px on a phone (it shrank to about 5 px when a 720-unit drawing was squeezed
 * into 350 px), and about one time label per 110 px.
 */
function boxFor(width: number) {
  const w = Math.max(280, Math.round(width));
  const height = Math.round(Math.min(260, Math.max(200, w * 0.36)));
  return { width: w, height, left: 52, bottom: 28, top: 10, right: 12, timeTicks: Math.max(3, Math.floor(w / 110)) };
}

/** The element's width in CSS pixels, kept current (the report on a phone, on a desk, on paper). */
function useWidth<T extends HTMLElement>(fallback: number): [RefObject<T | null>, number] {
  const ref = useRef<T | null>(null);
  const [width, setWidth] = useState(fallback);
  useEffect(() => {
    const el = ref.current;
    if (!el || typeof ResizeObserver === "undefined") return;
    const ro = new ResizeObserver(([e]) => setWidth(e.contentRect.width || fallback));
    ro.observe(el);
    return () => ro.disconnect();
  }, [fallback]);
  return [ref, width];
}

/**
 * One trace as a printable SVG: the min/max envelope of the printed window, the expert's marks
 * (spans shaded, pins and notes as lines, levels across), axes in ms and the channel's physical unit
 * (shared/trace/units: kV at the plug, amperes through a clamp, else volts), and the marks' labels
 * and levels listed under the figure (they would overlap on the plot).
 */
export function TraceFigure({ trace, marks, index }: { trace: ReportTrace; marks: FigureMark[]; index: number }) {
  const win = useMemo(() => figureWindow(trace, marks), [trace, marks]);
  const q = useReportWindow(trace.id, win.t0, win.t1, 600);
  const cu = useMemo(() => traceUnits(trace), [trace]);
  const unit = cu.unit;
  // the window and the marks' levels come in the file's unit: shown in the physical one
  const scaled = useMemo(() => (q.data ? scaleFigure(q.data, marks, cu.fromFile) : null), [q.data, marks, cu]);
  const [frame, width] = useWidth<HTMLElement>(720);
  const BOX = useMemo(() => boxFor(width), [width]);
  const g = useMemo(
    () => (scaled ? figureGeometry(scaled.window, scaled.marks, win.t0, win.t1, BOX) : null),
    [scaled, win, BOX],
  );
  const where =
    typeof trace.settings.coil === "number"
      ? `Coil ${trace.settings.coil}`
      : typeof trace.settings.cylinder === "number"
        ? `Cylinder ${trace.settings.cylinder}`
        : null;
  const title = `Figure ${index + 1}. ${where ? `${where} · ` : ""}${trace.name}`;
  return (
    <figure ref={frame} className="break-inside-avoid space-y-2">
      {g ? (
        <svg
          viewBox={`0 0 ${BOX.width} ${BOX.height}`}
          role="img"
          aria-label={title}
          className="h-auto w-full rounded border border-ink-200 bg-white"
        >
          <rect
            x={BOX.left}
            y={BOX.top}
            width={BOX.width - BOX.left - BOX.right}
            height={BOX.height - BOX.top - BOX.bottom}
            fill="#fff"
            stroke="#c9d3d9"
          />
          {g.levelTicks.map((t) => (
            <g key={`v${t.label}`}>
              <line x1={BOX.left} x2={BOX.width - BOX.right} y1={t.y} y2={t.y} stroke="#e4e9ec" />
              <text x={BOX.left - 6} y={t.y + 4} textAnchor="end" fontSize="11" fill="#435562">
                {t.label}
              </text>
            </g>
          ))}
          {g.timeTicks.map((t) => (
            <g key={`t${t.label}`}>
              <line x1={t.x} x2={t.x} y1={BOX.top} y2={BOX.height - BOX.bottom} stroke="#e4e9ec" />
              <text x={t.x} y={BOX.height - 10} textAnchor={t.anchor} fontSize="11" fill="#435562">
                {t.label}
              </text>
            </g>
          ))}
          {g.marks.map((m) =>
            m.kind === "span" ? (
              <g key={m.index}>
                <rect
                  x={m.x0}
                  y={BOX.top}
                  width={Math.max(1, m.x1 - m.x0)}
                  height={BOX.height - BOX.top - BOX.bottom}
                  fill={marks[m.index].color}
                  opacity="0.18"
                />
                <text
                  x={m.x0 + 4}
                  y={BOX.height - BOX.bottom - 6}
                  fontSize="11"
                  fontWeight="bold"
                  fill={marks[m.index].color}
                >
                  {m.index + 1}
                </text>
              </g>
            ) : null,
          )}
          <path d={g.envelope} fill="#1e2a32" opacity="0.35" />
          <path d={g.line} fill="none" stroke="#1e2a32" strokeWidth="1" />
          {g.marks.map((m) => {
            const color = marks[m.index].color;
            const i = m.index;
            if (m.kind === "level")
              return (
                <line
                  key={i}
                  x1={BOX.left}
                  x2={BOX.width - BOX.right}
                  y1={m.y}
                  y2={m.y}
                  stroke={color}
                  strokeWidth="1.5"
                  strokeDasharray="6 3"
                />
              );
            if (m.kind === "pin" || m.kind === "note")
              return (
                <g key={i}>
                  <line x1={m.x} x2={m.x} y1={BOX.top} y2={BOX.height - BOX.bottom} stroke={color} strokeWidth="1.5" />
                  {m.y != null ? <circle cx={m.x} cy={m.y} r="4" fill={color} /> : null}
                  <text x={m.x + 4} y={BOX.top + 12} fontSize="11" fontWeight="bold" fill={color}>
                    {i + 1}
                  </text>
                </g>
              );
            return null;
          })}
          <text x={12} y={BOX.top + 12} fontSize="11" fill="#435562">
            {unit}
          </text>
        </svg>
      ) : q.isError ? (
        <p className="text-sm text-alarm-600">This trace could not be drawn: {q.error.message}</p>
      ) : (
        <div className="h-48 animate-pulse rounded bg-ink-100" aria-label="Drawing the trace" />
      )}
      <figcaption className="text-sm text-ink-700">
        <span className="font-semibold">{title}</span> — {((win.t1 - win.t0) * 1000).toFixed(1)} ms shown.{" "}
        {unitSentence(cu, trace.channels[0])}
        {marks.length ? (
          <ol className="mt-1 list-decimal pl-5">
            {marks.map((m) => (
              <li key={m.id}>
                {m.kind === "span" ? "Span" : m.kind === "level" ? "Level" : m.kind === "pin" ? "Pin" : "Note"}
                {(m.kind === "level" || m.kind === "pin") && m.level != null
                  ? ` at ${formatLevel(m.level * cu.fromFile, unit)}`
                  : ""}
                {m.label ? `: ${m.label}` : ""}
              </li>
            ))}
          </ol>
        ) : null}
      </figcaption>
    </figure>
  );
}
