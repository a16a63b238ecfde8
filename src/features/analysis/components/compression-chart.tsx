import { LOW_COMPRESSION_PCT } from "../../../../shared/analysis/compression";
import type { CompressionSummary } from "../../../../shared/analysis/types";
import { BarChart } from "./bar-chart";

/**
 * Relative compression as bars: each stroke position of the firing sequence, its current rise as a
 * percentage of the strongest; positions below the suspect threshold in the alarm colour.
 */
export function CompressionChart({ summary }: { summary: Pick<CompressionSummary, "positions" | "lowPositions"> }) {
  if (!summary.positions?.length) return null;
  const low = new Set(summary.lowPositions ?? []);
  return (
    <div className="rounded-lg border border-ink-200 bg-white p-3">
      <BarChart
        title="Relative compression: each stroke of the firing sequence as % of the strongest"
        unit="%"
        ceiling={100}
        items={summary.positions.map((p) => ({
          key: String(p.position),
          label: `Stroke ${p.position}`,
          value: p.relativePct,
          odd: low.has(p.position),
        }))}
        reference={{ value: LOW_COMPRESSION_PCT, label: `${LOW_COMPRESSION_PCT} % line` }}
        format={(v) => `${Math.round(v)} %`}
      />
      <p className="mt-1 text-xs text-ink-500">
        Below the {LOW_COMPRESSION_PCT} % line a cylinder is suspect. Stroke 1 is the first compression after the
        starter's inrush; count along the firing order to name the cylinder.
      </p>
    </div>
  );
}
