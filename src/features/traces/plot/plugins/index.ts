/**
 * The plot's layers, one uPlot plugin each, in drawing order: traces, grid backdrop and levels,
 * analysis events, marks, pins, cursors, the selection being dragged, pointers. (uPlot runs the
 * plugins' hooks in this order; the backdrop and the span fills are drawn before the grid.)
 */
import type uPlot from "uplot";
import type { GetPlotState } from "../model";
import { tracesPlugin } from "./traces";
import { levelsPlugin } from "./levels";
import { eventsPlugin } from "./events";
import { marksPlugin } from "./marks";
import { pinsPlugin } from "./pins";
import { cursorsPlugin } from "./cursors";
import { selectionPlugin } from "./selection";
import { pointersPlugin } from "./pointers";

export function layerPlugins(get: GetPlotState): uPlot.Plugin[] {
  return [
    tracesPlugin,
    levelsPlugin,
    eventsPlugin,
    marksPlugin,
    pinsPlugin,
    cursorsPlugin,
    selectionPlugin,
    pointersPlugin,
  ].map((p) => p(get));
}

export { pinLevel, layerOf } from "../pin-level";
