import type { Comparison } from "../../../../shared/analysis/types";
import type { ChannelUnits } from "../../../lib/physical-units";
import { comparisonCharts } from "../lib/chart-data";
import { BarChart } from "./bar-chart";

/**
 * Cylinder by cylinder: a bar per trace for each compared metric (each trace's median), the
 * metrics with an odd one out first, the odd bar in the alarm colour and the median dashed.
 */
export function ComparisonChart({
  comparison,
  traces,
  units,
}: {
  comparison: Comparison;
  traces: { id: string; label: string }[];
  units?: ChannelUnits | null;
}) {
  const charts = comparisonCharts(comparison, traces, units);
  if (!charts.length) return null;
  return (
    <div className="grid gap-4 sm:grid-cols-2" aria-label="Cylinder by cylinder, as bars">
      {charts.map((ch) => (
        <BarChart
          key={ch.metric}
          title={ch.title}
          unit={ch.unit}
          items={ch.items}
          reference={ch.median != null ? { value: ch.median, label: "median" } : null}
        />
      ))}
    </div>
  );
}
