import { useMemo } from "react";
import { SCREEN_DIVISIONS_X, SCREEN_DIVISIONS_Y } from "../../../../shared/schemas/capture-settings";
import type { TraceInfo } from "../types";
import type { TraceLayer } from "../plot/model";
import type { TraceWindowState } from "./use-window-data";
import { fitRange, type CaptureView } from "../lib/capture-view";
import { divisionStep } from "../lib/grid";
import { traceColor } from "../lib/palette";
import type { Span } from "../lib/zoom";
import type { ChannelUnits } from "../../../lib/trace-units";

export interface LayersInput {
  traces: TraceInfo[];
  shown: TraceInfo[];
  overlay: boolean;
  windows: Record<string, TraceWindowState>;
  offsets: Record<string, number>;
  hiddenChannels: Set<string>;
  channelNames: string[];
  unitsById: Map<string, ChannelUnits[]>;
}

/** The min/max bands on screen, in display time and each channel's physical unit. */
export function usePlotLayers(inp: LayersInput): TraceLayer[] {
  const { traces, shown, overlay, windows, offsets, hiddenChannels, channelNames, unitsById } = inp;
  return useMemo(() => {
    const out: TraceLayer[] = [];
    for (const t of shown) {
      const data = windows[t.id]?.data;
      if (!data) continue;
      const off = overlay ? (offsets[t.id] ?? 0) : 0;
      const ts = off === 0 ? data.t : data.t.map((x) => x - off);
      const idx = traces.indexOf(t);
      data.series.forEach((s, j) => {
        const name = s.name ?? t.channels[j]?.name ?? String(j);
        if (hiddenChannels.has(name)) return;
        const f = unitsById.get(t.id)?.[j]?.fromFile ?? 1;
        out.push({
          key: `${t.id}:${j}`,
          traceId: t.id,
          channel: name,
          color: overlay ? traceColor(idx) : traceColor(Math.max(0, channelNames.indexOf(name))),
          t: ts,
          min: f === 1 ? s.min : s.min.map((x) => x * f),
          max: f === 1 ? s.max : s.max.map((x) => x * f),
          faint: overlay && j > 0,
        });
      });
    }
    return out;
  }, [shown, windows, overlay, offsets, traces, hiddenChannels, channelNames, unitsById]);
}

/** The level range: the capture's screen, or fitted to the data in view ("Fit"). */
export function levelRange(
  cap: CaptureView | null,
  fit: boolean,
  layers: TraceLayer[],
  view: Span,
): { vMin: number; vMax: number } {
  if (!cap) return { vMin: -1, vMax: 1 };
  if (!fit) return { vMin: cap.vMin, vMax: cap.vMax };
  let lo = Infinity;
  let hi = -Infinity;
  for (const l of layers)
    for (let k = 0; k < l.t.length; k++) {
      if (l.t[k] < view.t0 || l.t[k] > view.t1) continue;
      if (Number.isFinite(l.min[k])) lo = Math.min(lo, l.min[k]);
      if (Number.isFinite(l.max[k])) hi = Math.max(hi, l.max[k]);
    }
  return Number.isFinite(lo) ? fitRange(lo, hi) : { vMin: cap.vMin, vMax: cap.vMax };
}

/**
 * Grid steps: at the capture's own time/division the lines are the screen's divisions; zoomed, the
 * 1-2-5 step nearest to a tenth of the span (levels likewise, unless fitted).
 */
export function gridsFor(cap: CaptureView | null, view: Span, y: { vMin: number; vMax: number }, fit: boolean) {
  const xStep = divisionStep(view.t1 - view.t0, cap?.timePerDivS ?? 0, SCREEN_DIVISIONS_X);
  return {
    xGrid: { step: xStep, anchor: cap && xStep === cap.timePerDivS ? cap.t0 : 0 },
    yGrid: {
      step: divisionStep(y.vMax - y.vMin, fit ? 0 : (cap?.voltsPerDiv ?? 0), SCREEN_DIVISIONS_Y),
      anchor: fit ? 0 : (cap?.vMin ?? 0),
    },
  };
}
