import { compareTraces } from "../../../../shared/analysis/compare";
import type { AnalysisResult, Comparison } from "../../../../shared/analysis/types";
import { isAnalysisResult } from "./metrics";

/** Does the server's stored comparison have the shape the table reads? */
export function isComparison(x: unknown): x is Comparison {
  return (
    !!x &&
    typeof x === "object" &&
    Array.isArray((x as Comparison).metrics) &&
    Array.isArray((x as Comparison).outliers)
  );
}

/**
 * The comparison across the traces of one kind (the kind most of them share): the server's when
 * it sent one, otherwise the shared compareTraces over each trace's stored analysis — the same
 * modified z-score rule (Iglewicz and Hoaglin, |M| > 3.5 with its guards).
 */
export function comparisonFor(server: unknown, traces: { id: string; analysis: unknown }[]): Comparison | null {
  const analysed = traces.filter((t): t is { id: string; analysis: AnalysisResult } => isAnalysisResult(t.analysis));
  if (analysed.length < 2) return null;
  if (isComparison(server)) return server;
  const counts = new Map<string, number>();
  for (const t of analysed) counts.set(t.analysis.kind, (counts.get(t.analysis.kind) ?? 0) + 1);
  const kind = [...counts.entries()].sort((a, b) => b[1] - a[1])[0][0];
  const same = analysed.filter((t) => t.analysis.kind === kind);
  if (same.length < 2) return null;
  return compareTraces(
    same.map((t) => ({ kind: t.analysis.kind, unit: t.analysis.unit, summary: t.analysis.summary, traceId: t.id })),
  );
}
