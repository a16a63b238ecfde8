/**
 * Where a pin stands: on its trace's channel, at the trace's level at its time, read from the data
 * on screen (so it stays on the firing line at any zoom). Pure.
 */
import type { Annotation } from "../types";
import { traceLevelAt } from "../lib/snap";
import type { TraceLayer } from "./model";

/** The layer a mark of this trace (and channel) stands on: its channel, else the trace's first shown. */
export function layerOf(layers: TraceLayer[], traceId: string, channel?: string | null): TraceLayer | undefined {
  const own = layers.filter((l) => l.traceId === traceId);
  return (channel ? own.find((l) => l.channel === channel) : undefined) ?? own[0];
}

/** The level a pin's dot is drawn at (display unit): on the trace at its time, else its stored level. */
export function pinLevel(
  a: Pick<Annotation, "traceId" | "channel" | "t0" | "level">,
  layers: TraceLayer[],
): number | null {
  const layer = layerOf(layers, a.traceId, a.channel);
  const onTrace = layer ? traceLevelAt(layer, a.t0, a.level ?? NaN) : null;
  return onTrace ?? a.level ?? null;
}
