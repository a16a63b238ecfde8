import { median, modifiedZScores } from "./stats";
import type { AnalysisResult, ComparedMetric, Comparison, EventOutlier, Outlier, TraceKind } from "./types";

/** A result to compare, named by its file (CLI) or its trace id (server). */
export type ComparableResult = Pick<AnalysisResult, "kind" | "unit" | "summary"> & { file?: string; traceId?: string };

interface MetricSpec {
  metric: string;
  /** unit: "*" for the result's own unit */
  unit: string;
  /** smallest difference that can matter (whole counts: 1) */
  resolution?: number;
}

/** The metrics compared across cylinders, per kind. */
export const COMPARED_METRICS: Record<TraceKind, MetricSpec[]> = {
  "secondary-ignition": [
    { metric: "peak", unit: "*" },
    { metric: "burnTimeMs", unit: "ms" },
    { metric: "burnLevel", unit: "*" },
    { metric: "oscillations", unit: "count", resolution: 1 },
    { metric: "dwellMs", unit: "ms" },
  ],
  "relative-compression": [
    { metric: "peak", unit: "*" },
    { metric: "relativePct", unit: "%" },
  ],
  injector: [
    { metric: "pulseWidthMs", unit: "ms" },
    { metric: "turnOffPeak", unit: "V" },
    { metric: "humpDelayMs", unit: "ms" },
  ],
  crank: [
    { metric: "amplitude", unit: "*" },
    { metric: "toothPeriodMs", unit: "ms" },
  ],
  generic: [
    { metric: "peakToPeak", unit: "*" },
    { metric: "rms", unit: "*" },
    { metric: "frequencyHz", unit: "Hz" },
  ],
};

function valueOf(summary: unknown, metric: string): number | null {
  const x = (summary as Record<string, unknown>)[metric];
  if (typeof x === "number") return Number.isFinite(x) ? x : null;
  if (x && typeof x === "object" && "median" in x) {
    const m = (x as { median: unknown }).median;
    return typeof m === "number" && Number.isFinite(m) ? m : null;
  }
  return null;
}

function label(r: ComparableResult, i: number): { file?: string; traceId?: string } {
  if (r.file != null) return { file: r.file };
  if (r.traceId != null) return { traceId: r.traceId };
  return { traceId: String(i + 1) };
}

/**
 * Compares traces of one kind (one per coil or cylinder): each metric's per-trace median side by
 * side, and outliers by the modified z-score of Iglewicz and Hoaglin (1993),
 * M = 0.6745·(x − median)/MAD, flagged when |M| > 3.5 and the difference matters (≥ 10 % of the
 * median; see modifiedZScores for the guards against MAD = 0 and tiny spreads). Results of another
 * kind than the first are left out.
 */
export function compareTraces(results: readonly ComparableResult[]): Comparison {
  if (results.length === 0) return { metrics: [], outliers: [] };
  const kind = results[0].kind;
  const same = results.filter((r) => r.kind === kind);
  const specs = COMPARED_METRICS[kind] ?? [];
  const metrics: ComparedMetric[] = [];
  const outliers: Outlier[] = [];
  for (const spec of specs) {
    const values = same.map((r) => valueOf(r.summary, spec.metric));
    if (values.every((v) => v == null)) continue;
    const unit = spec.unit === "*" ? same[0].unit : spec.unit;
    const present = values.map((v, i) => ({ v, i })).filter((x): x is { v: number; i: number } => x.v != null);
    metrics.push({
      metric: spec.metric,
      unit,
      median: median(present.map((x) => x.v)),
      values: same.map((r, i) => ({ ...label(r, i), value: values[i] })),
    });
    const z = modifiedZScores(
      present.map((x) => x.v),
      { resolution: spec.resolution },
    );
    if (!z) continue;
    present.forEach((x, k) => {
      if (z.outlier[k]) {
        outliers.push({
          ...label(same[x.i], x.i),
          metric: spec.metric,
          value: x.v,
          median: z.median,
          score: Math.round(z.scores[k] * 100) / 100,
        });
      }
    });
  }
  return { metrics, outliers };
}

/** Outliers among the events of one trace, by the same modified z-score rule. */
export function compareEvents(result: Pick<AnalysisResult, "kind" | "events">): EventOutlier[] {
  const specs = COMPARED_METRICS[result.kind] ?? [];
  const events = result.events as unknown as Record<string, unknown>[];
  const out: EventOutlier[] = [];
  for (const spec of specs) {
    const vals = events.map((e) => (typeof e[spec.metric] === "number" ? (e[spec.metric] as number) : null));
    const present = vals.map((v, i) => ({ v, i })).filter((x): x is { v: number; i: number } => x.v != null);
    const z = modifiedZScores(
      present.map((x) => x.v),
      { resolution: spec.resolution },
    );
    if (!z) continue;
    present.forEach((x, k) => {
      if (z.outlier[k]) {
        out.push({
          event: x.i,
          timeS: typeof events[x.i].timeS === "number" ? (events[x.i].timeS as number) : NaN,
          metric: spec.metric,
          value: x.v,
          median: z.median,
          score: Math.round(z.scores[k] * 100) / 100,
        });
      }
    });
  }
  return out;
}
