import type { CaseTrace } from "../api/types";
import { formatBytes } from "../lib/labels";

/** "Cylinder 3", "Coil 2", or the file name when the trace says neither. */
export function traceLabel(t: Pick<CaseTrace, "name" | "settings">): string {
  const s = t.settings ?? {};
  if (typeof s.cylinder === "number") return `Cylinder ${s.cylinder}`;
  if (typeof s.coil === "number") return `Coil ${s.coil}`;
  return t.name;
}

const kindNames: Record<string, string> = {
  "secondary-ignition": "Secondary ignition",
  "relative-compression": "Relative compression",
  injector: "Injector",
  crank: "Crank sensor",
  generic: "Generic",
};
export const traceKindName = (k: string) => kindNames[k] ?? k;

function rate(hz: number): string {
  if (hz >= 1e6) return `${Number((hz / 1e6).toPrecision(3))} MS/s`;
  if (hz >= 1e3) return `${Number((hz / 1e3).toPrecision(3))} kS/s`;
  return `${Number(hz.toPrecision(3))} S/s`;
}
function dur(s: number): string {
  if (s >= 1) return `${Number(s.toPrecision(3))} s`;
  return `${Number((s * 1e3).toPrecision(3))} ms`;
}

function findingsCount(analysis: unknown): { problems: number; warnings: number } | null {
  const f = (analysis as { findings?: { severity?: string }[] } | null)?.findings;
  if (!Array.isArray(f)) return null;
  return {
    problems: f.filter((x) => x.severity === "problem").length,
    warnings: f.filter((x) => x.severity === "warning").length,
  };
}

/** A compact list of a case's traces (the draft page), with a remove button when allowed. */
export function TraceList({ traces, onDelete }: { traces: CaseTrace[]; onDelete?: (t: CaseTrace) => void }) {
  if (!traces.length) return <p className="text-sm text-ink-600">No traces on this case yet.</p>;
  return (
    <ul className="divide-y divide-ink-100 rounded-lg border border-ink-200" aria-label="Traces on this case">
      {traces.map((t) => {
        const fc = findingsCount(t.analysis);
        return (
          <li key={t.id} className="flex flex-wrap items-center gap-x-3 gap-y-1 px-3 py-2">
            <div className="min-w-0 flex-1">
              <p className="truncate font-semibold text-ink-900">
                {traceLabel(t)}
                {traceLabel(t) !== t.name ? <span className="ml-2 font-normal text-ink-500">{t.name}</span> : null}
              </p>
              <p className="text-sm text-ink-600">
                {traceKindName(t.kind)} · {t.samples.toLocaleString("en-US")} samples · {rate(t.sampleRateHz)} ·{" "}
                {dur(t.durationS)}
                {t.bytes ? ` · ${formatBytes(t.bytes)}` : ""}
              </p>
              {fc && (fc.problems || fc.warnings) ? (
                <p className="text-sm font-semibold text-kiln-700">
                  {[
                    fc.problems ? `${fc.problems} problem${fc.problems > 1 ? "s" : ""}` : "",
                    fc.warnings ? `${fc.warnings} to check` : "",
                  ]
                    .filter(Boolean)
                    .join(", ")}
                </p>
              ) : null}
            </div>
            {onDelete ? (
              <button
                type="button"
                className="min-h-11 rounded-lg px-3 text-sm font-semibold text-alarm-600 hover:bg-alarm-500/10"
                onClick={() => onDelete(t)}
                aria-label={`Remove trace ${t.name}`}
              >
                Remove
              </button>
            ) : null}
          </li>
        );
      })}
    </ul>
  );
}
