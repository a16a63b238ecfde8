import type { TraceInfo } from "../types";
import type { Alignment } from "../hooks/use-alignment";
import { PLOT_COLORS, traceColor } from "../lib/palette";

const ALIGN_TEXT = {
  event: "aligned on its first firing",
  crossing: "aligned on its trigger crossing",
  start: "not aligned (no event or crossing found)",
} as const;

const chipClass = (on: boolean) =>
  `min-h-10 flex items-center gap-2 rounded-md border px-2 text-sm ${on ? "border-ink-300 bg-white text-ink-900" : "border-ink-100 bg-ink-50 text-ink-400 line-through"}`;

/** Toggles a member of a set, keeping at least one of `all` on. */
export function toggleKept<T>(set: Set<T>, x: T, all: number): Set<T> {
  const n = new Set(set);
  if (n.has(x)) n.delete(x);
  else if (all - n.size > 1) n.add(x);
  return n;
}

/** The trace selector of single mode: one tab per trace; `flaggedId` is marked as the one to look at. */
export function TraceTabs({
  traces,
  activeId,
  flaggedId,
  onSelect,
}: {
  traces: TraceInfo[];
  activeId?: string;
  flaggedId?: string;
  onSelect: (id: string) => void;
}) {
  return (
    <div role="tablist" aria-label="Traces" className="mb-2 flex gap-1 overflow-x-auto">
      {traces.map((t) => (
        <button
          key={t.id}
          role="tab"
          type="button"
          aria-selected={t.id === activeId}
          onClick={() => onSelect(t.id)}
          className={`min-h-10 shrink-0 rounded-md px-3 text-sm ${t.id === activeId ? "bg-ink-800 text-white" : "bg-ink-50 text-ink-800 hover:bg-ink-100"}`}
        >
          {t.name}
          {t.id === flaggedId ? (
            <>
              <span
                className="ml-1.5 inline-block h-2 w-2 rounded-full bg-alarm-500 align-middle"
                title="Flagged: the one to look at"
                aria-hidden="true"
              />
              <span className="sr-only"> (flagged)</span>
            </>
          ) : null}
        </button>
      ))}
    </div>
  );
}

/** Which traces the overlay shows, each with its colour and how it was aligned. */
export function OverlayToggles({
  traces,
  hidden,
  alignment,
  onChange,
}: {
  traces: TraceInfo[];
  hidden: Set<string>;
  alignment: Alignment;
  onChange: (s: Set<string>) => void;
}) {
  return (
    <ul className="mb-2 flex flex-wrap gap-1" aria-label="Traces in the overlay">
      {traces.map((t, i) => {
        const on = !hidden.has(t.id);
        return (
          <li key={t.id}>
            <button
              type="button"
              aria-pressed={on}
              title={ALIGN_TEXT[alignment[t.id]?.source ?? "start"]}
              onClick={() => onChange(toggleKept(hidden, t.id, traces.length))}
              className={chipClass(on)}
            >
              <span className="inline-block h-1 w-5 rounded" style={{ background: traceColor(i) }} aria-hidden="true" />
              {t.name}
              {alignment[t.id]?.source === "start" ? <span className="text-xs text-alarm-600">not aligned</span> : null}
            </button>
          </li>
        );
      })}
    </ul>
  );
}

/** Which channels are drawn, for traces with several. */
export function ChannelToggles({
  names,
  hidden,
  overlay,
  onChange,
}: {
  names: string[];
  hidden: Set<string>;
  overlay: boolean;
  onChange: (s: Set<string>) => void;
}) {
  return (
    <div className="mb-2 flex flex-wrap gap-1" role="group" aria-label="Channels">
      {names.map((name, i) => {
        const on = !hidden.has(name);
        return (
          <button
            key={name}
            type="button"
            aria-pressed={on}
            onClick={() => onChange(toggleKept(hidden, name, names.length))}
            className={chipClass(on)}
          >
            <span
              className="inline-block h-1 w-5 rounded"
              style={{ background: overlay ? PLOT_COLORS.axis : traceColor(i) }}
              aria-hidden="true"
            />
            Channel {name}
          </button>
        );
      })}
    </div>
  );
}
