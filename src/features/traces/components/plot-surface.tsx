import { useEffect, useLayoutEffect, useRef } from "react";
import uPlot from "uplot";
import "uplot/dist/uPlot.min.css";
import type { AnnotationKind } from "../types";
import type { CursorPositions } from "../lib/readout";
import { gridLines, labelEvery } from "../lib/grid";
import { formatTicks } from "../../../lib/trace-units";
import type { Span } from "../lib/zoom";
import { PLOT_COLORS } from "../lib/palette";
import type { PlotModel, PlotTransient } from "../plot/model";
import { layerPlugins } from "../plot/plugins";
import { attachGestures, type MarkGesture } from "../plot/gestures";
import { MIN_PLOT_BOX, PADDING, X_AXIS_PX, Y_AXIS_PX } from "../plot/layout";

export type { MarkGesture } from "../plot/gestures";

export interface PlotSurfaceProps {
  width: number;
  height: number;
  view: Span;
  yRange: { vMin: number; vMax: number };
  xGrid: { step: number; anchor: number };
  yGrid: { step: number; anchor: number };
  levelUnit: string | null;
  model: PlotModel;
  tool: AnnotationKind | null;
  panMode: boolean;
  /** user-driven window change (the parent clamps it) */
  onView: (w: Span) => void;
  onCursors: (c: CursorPositions) => void;
  onMarkGesture: (g: MarkGesture) => void;
  onPick: (id: string | null) => void;
  /** pointer over the plot in display time and channel unit; null on leave */
  onHover: (p: { t: number; v: number } | null) => void;
  /** plot area (inside the axes) in CSS px, reported after layout */
  onPlotArea?: (a: { left: number; top: number; width: number; height: number }) => void;
  ariaLabel: string;
}

const AXIS_FONT = '11px "Merriweather Sans", ui-sans-serif, system-ui, sans-serif';

type Latest = { current: PlotSurfaceProps };

function axisLabels(latest: Latest, host: HTMLElement, along: "x" | "y") {
  return (u: uPlot, splits: number[]) => {
    const p = latest.current;
    const px = along === "x" ? u.bbox.width / (uPlot.pxRatio || 1) : u.bbox.height / (uPlot.pxRatio || 1);
    const every = labelEvery(splits.length, px, along === "x" ? 64 : 22);
    const text = formatTicks(splits, along === "x" ? p.xGrid.step : p.yGrid.step, along === "x" ? "s" : p.levelUnit);
    const shown = text.map((t, i) => (i % every === 0 ? t : ""));
    // the level labels as drawn, readable from the DOM (browser tests, assistive checks)
    if (along === "y") host.dataset.levelLabels = shown.filter(Boolean).join("|");
    return shown;
  };
}

function axis(latest: Latest, host: HTMLElement, along: "x" | "y"): uPlot.Axis {
  const grid = () => (along === "x" ? latest.current.xGrid : latest.current.yGrid);
  return {
    scale: along,
    ...(along === "y" ? { side: 3 } : {}),
    stroke: PLOT_COLORS.axis,
    font: AXIS_FONT,
    size: along === "x" ? X_AXIS_PX : Y_AXIS_PX,
    gap: 4,
    grid: { stroke: PLOT_COLORS.gridMajor, width: 1 },
    ticks: { stroke: PLOT_COLORS.gridMajor, width: 1, size: 4 },
    splits: (_u, _i, min, max) => gridLines(min, max, grid().step, grid().anchor, 400),
    values: axisLabels(latest, host, along),
  };
}

function plotOptions(latest: Latest, host: HTMLElement, transient: PlotTransient): uPlot.Options {
  const p = latest.current;
  const reportArea = (u: uPlot) => {
    const pr = uPlot.pxRatio || 1;
    latest.current.onPlotArea?.({
      left: u.bbox.left / pr,
      top: u.bbox.top / pr,
      width: u.bbox.width / pr,
      height: u.bbox.height / pr,
    });
  };
  return {
    width: Math.max(p.width, MIN_PLOT_BOX),
    height: Math.max(p.height, MIN_PLOT_BOX),
    padding: PADDING,
    legend: { show: false },
    cursor: { show: false, drag: { x: false, y: false, setScale: false } },
    select: { show: false, left: 0, top: 0, width: 0, height: 0 },
    scales: {
      x: { time: false, auto: false, range: () => [latest.current.view.t0, latest.current.view.t1] },
      y: { auto: false, range: () => [latest.current.yRange.vMin, latest.current.yRange.vMax] },
    },
    series: [{}, { scale: "y", stroke: "transparent", points: { show: false } }],
    axes: [axis(latest, host, "x"), axis(latest, host, "y")],
    plugins: layerPlugins(() => ({ ...latest.current.model, ...transient })),
    hooks: { setSize: [reportArea], ready: [reportArea] },
  };
}

/** The uPlot canvas with one plugin per drawn layer and the viewer's gestures. */
export function PlotSurface(props: PlotSurfaceProps) {
  const hostRef = useRef<HTMLDivElement>(null);
  const uRef = useRef<uPlot | null>(null);
  const latest = useRef(props);

  // every draw and gesture reads the latest props
  useLayoutEffect(() => {
    latest.current = props;
  });

  // the chart is made once
  useLayoutEffect(() => {
    const host = hostRef.current!;
    const transient: PlotTransient = { selection: null, hover: null };
    const v = latest.current.view;
    const u = new uPlot(
      plotOptions(latest, host, transient),
      [
        [v.t0, v.t1],
        [null, null],
      ] as unknown as uPlot.AlignedData,
      host,
    );
    uRef.current = u;
    const detach = attachGestures(u, { props: () => latest.current, transient });
    return () => {
      detach();
      u.destroy();
      uRef.current = null;
    };
  }, []);

  useEffect(() => {
    // a hidden container measures 0: keep the last real size rather than collapse the plot
    if (props.width < 50) return;
    uRef.current?.setSize({ width: Math.max(props.width, MIN_PLOT_BOX), height: Math.max(props.height, MIN_PLOT_BOX) });
  }, [props.width, props.height]);

  useEffect(() => {
    const u = uRef.current;
    if (!u) return;
    u.batch(() => {
      u.setScale("x", { min: props.view.t0, max: props.view.t1 });
      u.setScale("y", { min: props.yRange.vMin, max: props.yRange.vMax });
    });
  }, [props.view.t0, props.view.t1, props.yRange.vMin, props.yRange.vMax]);

  const { model, xGrid, yGrid, levelUnit } = props;
  useEffect(() => {
    uRef.current?.redraw(false, true);
  }, [model, xGrid.step, xGrid.anchor, yGrid.step, yGrid.anchor, levelUnit]);

  // the shown time window (s) and level range (channel unit), readable from the DOM for browser tests
  return (
    <div
      ref={hostRef}
      className="select-none"
      role="img"
      aria-label={props.ariaLabel}
      data-window-t0={props.view.t0}
      data-window-t1={props.view.t1}
      data-vmin={props.yRange.vMin}
      data-vmax={props.yRange.vMax}
      data-level-unit={props.levelUnit ?? undefined}
    />
  );
}
