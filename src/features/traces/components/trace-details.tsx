import type { TraceChannelMeta } from "../../../../shared/trace/types";
import { traceUnits, unitSentence } from "../../../lib/trace-units";

/** The trace's unit line: the unit every view shows, the probe scale applied (or not), the file's own word. */
export function TraceUnitsNote({ trace }: { trace: { channels: TraceChannelMeta[]; settings?: object } }) {
  const cu = traceUnits(trace);
  return <p className="text-sm text-ink-600">{unitSentence(cu, trace.channels[0])}</p>;
}

/** The reader's notes about a trace, skipped rows first (their count and first lines). */
export function TraceWarnings({ warnings, max = 4 }: { warnings: string[] | undefined; max?: number }) {
  if (!warnings?.length) return null;
  const sorted = [...warnings].sort((a, b) => Number(/^skipped /.test(b)) - Number(/^skipped /.test(a)));
  const shown = sorted.slice(0, max);
  const more = sorted.length - shown.length;
  return (
    <ul className="space-y-0.5 text-sm text-kiln-700" aria-label="Notes from reading the file">
      {shown.map((w) => (
        <li key={w}>{w.charAt(0).toUpperCase() + w.slice(1)}</li>
      ))}
      {more > 0 ? <li className="text-ink-500">… and {more} more</li> : null}
    </ul>
  );
}
