import type { Comparison } from "../../../../shared/analysis/types";
import type { ChannelUnits } from "../../../lib/physical-units";
import { metricLabel, physicalMetric } from "./metrics";
import type { BarInput } from "./bars";

/** A unit to print ("count" is a plain number). */
export const shownUnit = (u: string | undefined) => (!u || u === "count" ? "" : u);

/** A comparison metric's value in the traces' physical unit when it is a level (V, kV, A…); other units kept. */
export function displayMetric(
  x: number | null | undefined,
  unit: string,
  units?: ChannelUnits | null,
): { value: number | null | undefined; unit: string } {
  const m = /^(kV|V|mV|A|mA)(\/.+)?$/.exec(unit);
  return m ? physicalMetric(x, `$${m[2] ?? ""}`, m[1], units) : { value: x, unit };
}

/** "Cylinder 3" → "Cyl 3", "Injector 2" → "Inj 2"; other labels shortened to fit under a bar. */
export function shortLabel(label: string): string {
  const m = /^([A-Za-z]+)\s+(\d+)/.exec(label);
  if (m && m[1].length > 4) return `${m[1].slice(0, 3)} ${m[2]}`;
  return label.length > 9 ? label.slice(0, 8) + "…" : label;
}

export interface MetricChart {
  metric: string;
  title: string;
  unit: string;
  median: number | null;
  items: BarInput[];
}

/** The comparison's metrics as bar charts: those with an odd one out first, then in the analysis's order. */
export function comparisonCharts(
  c: Comparison,
  traces: { id: string; label: string }[],
  units?: ChannelUnits | null,
  max = 4,
): MetricChart[] {
  const flagged = new Set(c.outliers.map((o) => `${o.traceId}\u0000${o.metric}`));
  const charts = c.metrics
    .filter((m) => m.values.filter((v) => v.value != null).length >= 2)
    .map((m) => {
      const unit = shownUnit(displayMetric(null, m.unit, units).unit);
      return {
        metric: m.metric,
        title: metricLabel(m.metric),
        unit,
        median: displayMetric(m.median, m.unit, units).value ?? null,
        items: traces.map((t) => ({
          key: t.id,
          label: shortLabel(t.label),
          name: t.label,
          value: displayMetric(m.values.find((v) => v.traceId === t.id)?.value ?? null, m.unit, units).value ?? null,
          odd: flagged.has(`${t.id}\u0000${m.metric}`),
        })),
      };
    });
  const withOdd = charts.filter((ch) => ch.items.some((i) => i.odd));
  const rest = charts.filter((ch) => !ch.items.some((i) => i.odd));
  return [...withOdd, ...rest].slice(0, max);
}
