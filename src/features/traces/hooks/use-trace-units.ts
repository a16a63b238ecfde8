import { useCallback, useMemo } from "react";
import type { TraceInfo } from "../types";
import { channelUnits, traceUnits, type ChannelUnits } from "../../../lib/trace-units";

export interface TraceUnits {
  /** each trace's channels' unit models (shared/trace/units), by trace id */
  unitsById: Map<string, ChannelUnits[]>;
  /** the unit model of a trace's channel (its first when not named) */
  cuOf: (traceId: string | undefined, channel?: string | null) => ChannelUnits;
}

/**
 * Every level is shown in its channel's physical unit (shared/trace/units): the window data, marks'
 * levels and pointers travel in the file's unit and are scaled by `fromFile` for display.
 */
export function useTraceUnits(traces: TraceInfo[]): TraceUnits {
  const unitsById = useMemo(
    () => new Map(traces.map((t) => [t.id, t.channels.map((_, j) => traceUnits(t, j))])),
    [traces],
  );
  const cuOf = useCallback(
    (id: string | undefined, channel?: string | null): ChannelUnits => {
      const t = traces.find((x) => x.id === id);
      const j =
        channel && t
          ? Math.max(
              0,
              t.channels.findIndex((c) => c.name === channel),
            )
          : 0;
      return (id ? unitsById.get(id)?.[j] : undefined) ?? channelUnits(null);
    },
    [traces, unitsById],
  );
  return { unitsById, cuOf };
}
