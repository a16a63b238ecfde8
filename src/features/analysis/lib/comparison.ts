import { modifiedZScores } from "../../../../shared/analysis/stats";
import type { AnalysisResult, Comparison, ComparedMetric, Outlier } from "../../../../shared/analysis/types";
import { isAnalysisResult, metricsByKind, resolveUnit } from "./metrics";

/** Does the server's stored comparison have the shape the table reads? */
export function isComparison(x: unknown): x is Comparison {
  return !!x && typeof x === "object" && Array.isArray((x as Comparison).metrics) && Array.isArray((x as Comparison).outliers);
}

/**
 * The comparison across the traces of one kind: the server's when it sent one, otherwise worked
 * out here from each trace's medians with the shared modified z-score (Iglewicz and Hoaglin,
 * |M| > 3.5, with its guards so that noise is never an outlier).
 */
export function comparisonFor(server: unknown, traces: { id: string; analysis: unknown }[]): Comparison | null {
  const analysed = traces.filter((t): t is { id: string; analysis: AnalysisResult } => isAnalysisResult(t.analysis));
  if (analysed.length < 2) return null;
  if (isComparison(server)) return server;

  // the kind most traces share
  const counts = new Map<string, number>();
  for (const t of analysed) counts.set(t.analysis.kind, (counts.get(t.analysis.kind) ?? 0) + 1);
  const kind = [...counts.entries()].sort((a, b) => b[1] - a[1])[0][0] as AnalysisResult["kind"];
  const same = analysed.filter((t) => t.analysis.kind === kind);
  if (same.length < 2) return null;

  const metrics: ComparedMetric[] = [];
  const outliers: Outlier[] = [];
  for (const def of metricsByKind[kind] ?? []) {
    const values = same.map((t) => {
      const s = (t.analysis.summary as unknown as Record<string, { median?: number | null } | undefined>)[def.key];
      const v = s && typeof s === "object" ? (s.median ?? null) : null;
      return { traceId: t.id, value: typeof v === "number" && Number.isFinite(v) ? v : null };
    });
    const present = values.filter((v): v is { traceId: string; value: number } => v.value !== null);
    if (present.length === 0) continue;
    const z = modifiedZScores(
      present.map((v) => v.value),
      { resolution: def.integer ? 1 : 0 },
    );
    metrics.push({ metric: def.key, unit: resolveUnit(def.unit, same[0].analysis.unit), median: z?.median ?? null, values });
    if (!z) continue;
    present.forEach((v, i) => {
      if (z.outlier[i]) outliers.push({ traceId: v.traceId, metric: def.key, value: v.value, median: z.median, score: Number(z.scores[i].toFixed(2)) });
    });
  }
  return { metrics, outliers };
}
