import type { Comparison } from "../../../../shared/analysis/types";
import { isAnalysisResult } from "./metrics";

/**
 * The trace to open first: the comparison's odd one out (the first trace, in the case's order,
 * with a value flagged by the modified z-score rule), else the first trace whose capture review
 * found a problem, else none (the viewer opens the first trace).
 */
export function flaggedTraceId(
  comparison: Comparison | null | undefined,
  traces: { id: string; analysis: unknown }[],
): string | undefined {
  const odd = new Set((comparison?.outliers ?? []).map((o) => o.traceId));
  const byOutlier = traces.find((t) => odd.has(t.id));
  if (byOutlier) return byOutlier.id;
  const withProblem = traces.find(
    (t) => isAnalysisResult(t.analysis) && t.analysis.findings.some((f) => f.severity === "problem"),
  );
  return withProblem?.id;
}
