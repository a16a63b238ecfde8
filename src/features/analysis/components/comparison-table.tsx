import { useId, useState, type ReactNode } from "react";
import type { Comparison, Outlier } from "../../../../shared/analysis/types";
import { fmtNum, fmtWithUnit } from "../lib/format";
import { metricLabel } from "../lib/metrics";
import { displayMetric, shownUnit } from "../lib/chart-data";
import type { ChannelUnits } from "../../../lib/physical-units";

export interface ComparedTrace {
  id: string;
  /** "Cylinder 3", "Coil 2" or the file name */
  label: string;
}

/**
 * A plain-words statement of the comparison, as the analysis gives it (shared/analysis, when it
 * sends `statements`): "Cylinder 3: firing line 40 % below the others, burn time 44 % shorter".
 */
export interface ComparisonStatement {
  traceId?: string;
  file?: string;
  cylinder?: number;
  text: string;
  metrics?: string[];
}

const outlierKey = (traceId: string | undefined, metric: string) => `${traceId}\u0000${metric}`;

function unitOf(c: Comparison, metric: string): string {
  return shownUnit(c.metrics.find((m) => m.metric === metric)?.unit);
}

/** Metrics that are durations: "shorter"/"longer" reads better than "below"/"above". */
const DURATION = /(Ms|S)$/;
/** Metrics that count things: "fewer"/"more". */
const COUNTS = new Set(["oscillations", "teeth", "eventCount"]);

/** "firing line 40 % below the others", "burn time 44 % shorter" — from a value and the median of the rest. */
export function outlierPhrase(o: Pick<Outlier, "metric" | "value" | "median">): string {
  const what = metricLabel(o.metric).toLowerCase();
  if (!(Math.abs(o.median) > 0)) return `${what} ${fmtNum(o.value)} where the others read ${fmtNum(o.median)}`;
  const pct = Math.round((Math.abs(o.value - o.median) / Math.abs(o.median)) * 100);
  const low = o.value < o.median;
  const word = DURATION.test(o.metric)
    ? low
      ? "shorter"
      : "longer"
    : COUNTS.has(o.metric)
      ? low
        ? "fewer"
        : "more"
      : low
        ? "below the others"
        : "above the others";
  return `${what} ${pct} % ${word}`;
}

/** Plain sentences per trace when the analysis gives no statements of its own. */
export function outlierStatements(c: Comparison, labelOf: (id: string | undefined) => string): ComparisonStatement[] {
  const byTrace = new Map<string | undefined, Outlier[]>();
  for (const o of c.outliers) byTrace.set(o.traceId, [...(byTrace.get(o.traceId) ?? []), o]);
  return [...byTrace.entries()].map(([traceId, list]) => ({
    traceId,
    text: `${labelOf(traceId)}: ${list.map(outlierPhrase).join(", ")}`,
    metrics: list.map((o) => o.metric),
  }));
}

/** The statistic behind a flagged value, for experts: value, median and the modified z-score. */
export function outlierDetail(o: Outlier, label: string, unit: string): string {
  const what = metricLabel(o.metric).toLowerCase();
  return `${label} ${what}: ${fmtWithUnit(o.value, unit)} against a median of ${fmtWithUnit(o.median, unit)}; modified z-score ${fmtNum(o.score, 2)}`;
}

/** What stands out, in plain words (or that the cylinders agree). */
function OddOnesOut({ statements }: { statements: ComparisonStatement[] }) {
  if (!statements.length) {
    return (
      <p className="rounded-lg border border-verdigris-500 bg-white px-3 py-2 text-sm font-semibold text-verdigris-600">
        The cylinders agree: no trace stands out from the others.
      </p>
    );
  }
  return (
    <ul className="space-y-1" aria-label="Odd ones out">
      {statements.map((st, i) => (
        <li
          key={`${st.traceId ?? st.file ?? i}-${i}`}
          className="flex gap-2 rounded-lg border-l-4 border-alarm-500 bg-alarm-500/5 px-3 py-2 text-sm font-semibold text-ink-900"
        >
          <span aria-hidden="true" className="text-alarm-600">
            ●
          </span>
          {st.text}
        </li>
      ))}
    </ul>
  );
}

/**
 * One row per trace (cylinder or coil), one column per metric (each trace's median), in the
 * channel's physical unit when the traces' unit model is given. What stands out is said first in
 * plain words; the values that stand out are flagged in the table, and the statistic that decided
 * it (the modified z-score of Iglewicz and Hoaglin with a difference that matters) is one click away.
 */
export function ComparisonTable({
  comparison,
  traces,
  units,
  aside,
}: {
  comparison: Comparison;
  traces: ComparedTrace[];
  units?: ChannelUnits | null;
  aside?: ReactNode;
}) {
  const labelOf = (id: string | undefined) => traces.find((t) => t.id === id)?.label ?? "Trace";
  const flagged = new Map(comparison.outliers.map((o) => [outlierKey(o.traceId, o.metric), o]));
  const metrics = comparison.metrics.filter((m) => m.values.some((v) => v.value !== null));
  const rowIds = traces.map((t) => t.id);
  const given = (comparison as Comparison & { statements?: ComparisonStatement[] }).statements;
  const statements = Array.isArray(given) && given.length ? given : outlierStatements(comparison, labelOf);
  const oddIds = new Set([
    ...comparison.outliers.map((o) => o.traceId),
    ...statements.filter((s) => s.metrics?.length).map((s) => s.traceId),
  ]);
  const [open, setOpen] = useState(false);
  const detailsId = useId();
  /** a metric in volts or amperes (or per ms) in the traces' physical unit; other units kept */
  const shown = (x: number | null | undefined, unit: string) => displayMetric(x, unit, units);

  if (!metrics.length)
    return <p className="text-sm text-ink-600">Nothing to compare yet: the traces have no measured events.</p>;

  return (
    <div className="space-y-3">
      <OddOnesOut statements={statements} />
      <div className={aside ? "grid gap-4 xl:grid-cols-[minmax(0,1fr)_minmax(0,1fr)]" : ""}>
        <div className="self-start overflow-x-auto rounded-lg border border-ink-200">
          <table className="w-full min-w-[30rem] text-sm">
            <caption className="sr-only">
              Comparison across cylinders: each trace's median per metric; values that stand out are flagged
            </caption>
            <thead className="bg-ink-50">
              <tr>
                <th scope="col" className="sticky left-0 z-10 bg-ink-50 px-3 py-2 text-left font-semibold text-ink-600">
                  Trace
                </th>
                {metrics.map((m) => (
                  <th key={m.metric} scope="col" className="px-3 py-2 text-right font-semibold text-ink-600">
                    {metricLabel(m.metric)}
                    {shownUnit(shown(null, m.unit).unit) ? (
                      <span className="block text-xs font-normal text-ink-500">
                        {shownUnit(shown(null, m.unit).unit)}
                      </span>
                    ) : null}
                  </th>
                ))}
              </tr>
            </thead>
            <tbody className="divide-y divide-ink-100">
              {rowIds.map((id) => {
                const odd = oddIds.has(id);
                return (
                  <tr key={id} className={odd ? "bg-alarm-500/5" : undefined}>
                    <th
                      scope="row"
                      className={`sticky left-0 z-10 px-3 py-2 text-left font-semibold text-ink-900 ${odd ? "bg-[#fcf6f5]" : "bg-white"}`}
                    >
                      <span className="whitespace-nowrap">{labelOf(id)}</span>
                      {odd ? (
                        <span className="mt-0.5 block w-fit whitespace-nowrap rounded bg-alarm-500 px-1.5 py-0.5 text-xs font-bold text-white">
                          odd one out
                        </span>
                      ) : null}
                    </th>
                    {metrics.map((m) => {
                      const v = m.values.find((x) => x.traceId === id)?.value ?? null;
                      const o = flagged.get(outlierKey(id, m.metric));
                      return (
                        <td
                          key={m.metric}
                          className={`px-3 py-2 text-right tabular-nums ${o ? "font-bold text-alarm-600 ring-2 ring-inset ring-alarm-500" : "text-ink-800"}`}
                        >
                          {fmtNum(shown(v, m.unit).value)}
                          {o ? <span className="sr-only"> (stands out)</span> : null}
                        </td>
                      );
                    })}
                  </tr>
                );
              })}
            </tbody>
            <tfoot className="border-t-2 border-ink-200 bg-ink-50">
              <tr>
                <th scope="row" className="sticky left-0 z-10 bg-ink-50 px-3 py-2 text-left font-semibold text-ink-600">
                  Median
                </th>
                {metrics.map((m) => (
                  <td key={m.metric} className="px-3 py-2 text-right font-semibold tabular-nums text-ink-700">
                    {fmtNum(shown(m.median, m.unit).value)}
                  </td>
                ))}
              </tr>
            </tfoot>
          </table>
        </div>
        {aside ? <div className="min-w-0">{aside}</div> : null}
      </div>
      {comparison.outliers.length ? (
        <div>
          <button
            type="button"
            className="min-h-11 rounded-lg px-2 text-sm font-semibold text-ink-600 underline decoration-dotted hover:text-ink-900"
            aria-expanded={open}
            aria-controls={detailsId}
            onClick={() => setOpen((x) => !x)}
          >
            {open ? "Hide" : "Show"} how this was decided
          </button>
          {open ? (
            <div id={detailsId} className="mt-1 space-y-1 rounded-lg bg-ink-50 px-3 py-2 text-xs text-ink-700">
              <ul className="space-y-0.5">
                {comparison.outliers.map((o) => {
                  const m = shown(o.value, unitOf(comparison, o.metric));
                  const med = shown(o.median, unitOf(comparison, o.metric));
                  return (
                    <li key={outlierKey(o.traceId, o.metric)}>
                      {outlierDetail(
                        { ...o, value: m.value ?? o.value, median: med.value ?? o.median },
                        labelOf(o.traceId),
                        shownUnit(m.unit),
                      )}
                    </li>
                  );
                })}
              </ul>
              <p>
                A value stands out when its modified z-score, 0.6745·(x − median)/MAD, is beyond ±3.5 (Iglewicz and
                Hoaglin, 1993) and it differs from the median by a margin that matters.
              </p>
            </div>
          ) : null}
        </div>
      ) : null}
    </div>
  );
}
