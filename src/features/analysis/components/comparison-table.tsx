import type { Comparison, Outlier } from "../../../../shared/analysis/types";
import { fmtNum, fmtWithUnit } from "../lib/format";
import { metricLabel } from "../lib/metrics";

export interface ComparedTrace {
  id: string;
  /** "Cylinder 3", "Coil 2" or the file name */
  label: string;
}

const outlierKey = (traceId: string | undefined, metric: string) => `${traceId}\u0000${metric}`;

/** The unit to print ("count" is a plain number). */
const shownUnit = (u: string | undefined) => (!u || u === "count" ? "" : u);

function unitOf(c: Comparison, metric: string): string {
  return shownUnit(c.metrics.find((m) => m.metric === metric)?.unit);
}

/** "Coil 3 burn time 0.62 ms vs median 1.48 ms (score −6.1)" */
export function outlierSentence(o: Outlier, label: string, unit: string): string {
  const what = metricLabel(o.metric).toLowerCase();
  return `${label} ${what} ${fmtWithUnit(o.value, unit)} vs median ${fmtWithUnit(o.median, unit)} (modified z-score ${fmtNum(o.score, 2)})`;
}

/**
 * One row per trace (cylinder or coil), one column per metric (each trace's median). A value the
 * analysis flags as the odd one out (modified z-score of Iglewicz and Hoaglin, |M| > 3.5 and a
 * difference that matters) is highlighted with its score, and said in a sentence above the table.
 */
export function ComparisonTable({ comparison, traces }: { comparison: Comparison; traces: ComparedTrace[] }) {
  const labelOf = (id: string | undefined) => traces.find((t) => t.id === id)?.label ?? "Trace";
  const flagged = new Map(comparison.outliers.map((o) => [outlierKey(o.traceId, o.metric), o]));
  const metrics = comparison.metrics.filter((m) => m.values.some((v) => v.value !== null));
  const rowIds = traces.map((t) => t.id);

  if (!metrics.length) return <p className="text-sm text-ink-600">Nothing to compare yet: the traces have no measured events.</p>;

  return (
    <div className="space-y-3">
      {comparison.outliers.length ? (
        <ul className="space-y-1" aria-label="Odd ones out">
          {comparison.outliers.map((o) => (
            <li key={outlierKey(o.traceId, o.metric)} className="flex gap-2 rounded-lg border-l-4 border-alarm-500 bg-alarm-500/5 px-3 py-2 text-sm font-semibold text-ink-900">
              <span aria-hidden="true" className="text-alarm-600">
                ●
              </span>
              {outlierSentence(o, labelOf(o.traceId), unitOf(comparison, o.metric))}
            </li>
          ))}
        </ul>
      ) : (
        <p className="rounded-lg border border-verdigris-500 bg-white px-3 py-2 text-sm font-semibold text-verdigris-600">
          The cylinders agree: no trace stands out from the others.
        </p>
      )}

      <div className="overflow-x-auto rounded-lg border border-ink-200">
        <table className="w-full min-w-[30rem] text-sm">
          <caption className="sr-only">Comparison across cylinders: each trace's median per metric; odd values highlighted</caption>
          <thead className="bg-ink-50">
            <tr>
              <th scope="col" className="sticky left-0 z-10 bg-ink-50 px-3 py-2 text-left font-semibold text-ink-600">
                Trace
              </th>
              {metrics.map((m) => (
                <th key={m.metric} scope="col" className="px-3 py-2 text-right font-semibold text-ink-600">
                  {metricLabel(m.metric)}
                  {shownUnit(m.unit) ? <span className="block text-xs font-normal text-ink-500">{shownUnit(m.unit)}</span> : null}
                </th>
              ))}
            </tr>
          </thead>
          <tbody className="divide-y divide-ink-100">
            {rowIds.map((id) => {
              const odd = metrics.some((m) => flagged.has(outlierKey(id, m.metric)));
              return (
                <tr key={id} className={odd ? "bg-alarm-500/5" : undefined}>
                  <th scope="row" className={`sticky left-0 z-10 px-3 py-2 text-left font-semibold text-ink-900 ${odd ? "bg-[#fcf6f5]" : "bg-white"}`}>
                    <span className="whitespace-nowrap">{labelOf(id)}</span>
                    {odd ? <span className="mt-0.5 block w-fit whitespace-nowrap rounded bg-alarm-500 px-1.5 py-0.5 text-xs font-bold text-white">odd one out</span> : null}
                  </th>
                  {metrics.map((m) => {
                    const v = m.values.find((x) => x.traceId === id)?.value ?? null;
                    const o = flagged.get(outlierKey(id, m.metric));
                    return (
                      <td
                        key={m.metric}
                        className={`px-3 py-2 text-right tabular-nums ${o ? "font-bold text-alarm-600 ring-2 ring-inset ring-alarm-500" : "text-ink-800"}`}
                      >
                        {fmtNum(v)}
                        {o ? <span className="block whitespace-nowrap text-xs font-semibold">M = {fmtNum(o.score, 2)}</span> : null}
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
                  {fmtNum(m.median)}
                </td>
              ))}
            </tr>
          </tfoot>
        </table>
      </div>
      <p className="text-xs text-ink-500">
        Odd values: modified z-score M = 0.6745·(x − median)/MAD beyond ±3.5 (Iglewicz and Hoaglin, 1993), and at least a difference that matters.
      </p>
    </div>
  );
}
