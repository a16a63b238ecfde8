/**
 * Comparison across traces of one kind (one per coil or cylinder): each metric's per-trace median
 * side by side, the traces that stand out (data for an expert), and plain sentences for the tech.
 *
 * A trace stands out on a metric by the modified z-score of Iglewicz and Hoaglin (1993),
 * M = 0.6745·(x − median)/MAD, |M| > 3.5, when the difference also matters (≥ 10 % of the median;
 * see modifiedZScores for the guards against MAD = 0 and tiny spreads).
 *
 * Pickup placement is not a fault: a capacitive pickup's coupling depends on how it lies on the coil
 * and scales the whole waveform (common practice, no source). So secondary traces are also compared
 * on measures that placement does not change — burn time, ringing, dwell, the firing line against its
 * own spark line, the spark line's slope against its level. A trace whose voltages (firing line,
 * spark line) stand out by one common factor while none of those measures does is not flagged: it
 * gets a "placement" sentence with the advice to lay the pickup flat and capture again.
 */
import { differencePhrase, placementPhrase, traceLabel } from "./compare-words";
import { median, modifiedZScores } from "./stats";
import type {
  AnalysisResult,
  ComparedMetric,
  Comparison,
  ComparisonStatement,
  EventOutlier,
  Outlier,
  TraceKind,
} from "./types";

/** A result to compare, named by its file (CLI) or its trace id (server), and its cylinder when known. */
export type ComparableResult = Pick<AnalysisResult, "kind" | "unit" | "summary"> & {
  file?: string;
  traceId?: string;
  cylinder?: number | null;
  coil?: number | null;
  /** a name for the trace in sentences when no cylinder or coil is known */
  label?: string;
};

interface MetricSpec {
  metric: string;
  /** unit: "*" for the result's own unit */
  unit: string;
  /** smallest difference that can matter (whole counts: 1) */
  resolution?: number;
  /** a voltage level, scaled by the pickup's coupling (secondary only) */
  scaled?: boolean;
}

/** The metrics compared across cylinders, per kind. */
export const COMPARED_METRICS: Record<TraceKind, MetricSpec[]> = {
  "secondary-ignition": [
    { metric: "peak", unit: "*", scaled: true },
    { metric: "burnTimeMs", unit: "ms" },
    { metric: "burnLevel", unit: "*", scaled: true },
    { metric: "oscillations", unit: "count", resolution: 1 },
    { metric: "dwellMs", unit: "ms" },
    // placement-free: a ratio and a slope relative to the level (coupling cancels out)
    { metric: "firingToSpark", unit: "ratio", resolution: 0.5 },
    { metric: "sparkSlopePctPerMs", unit: "%/ms", resolution: 5 },
  ],
  "relative-compression": [
    { metric: "peak", unit: "*" },
    { metric: "relativePct", unit: "%" },
  ],
  injector: [
    { metric: "pulseWidthMs", unit: "ms" },
    { metric: "turnOffPeak", unit: "*" },
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

/** Two scale estimates (firing line, spark line) agree when within this fraction of each other. */
const SCALE_AGREEMENT = 0.15;

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

interface Flag {
  trace: number;
  spec: MetricSpec;
  value: number;
  median: number;
  score: number;
}

/** Median of the metric over the other traces. */
function othersMedian(values: (number | null)[], i: number): number | null {
  return median(values.filter((v, k): v is number => k !== i && v != null));
}

/** The common scale of a trace flagged only on voltage levels, or null when it is not placement. */
function placementScale(flags: Flag[], table: Map<string, (number | null)[]>, i: number): number | null {
  if (!flags.length || flags.some((f) => !f.spec.scaled)) return null;
  const scales: number[] = [];
  for (const metric of ["peak", "burnLevel"]) {
    const values = table.get(metric);
    const v = values?.[i];
    const others = values ? othersMedian(values, i) : null;
    if (v == null || others == null || !(others > 0) || !(v > 0)) return null;
    scales.push(v / others);
  }
  const [a, b] = scales;
  return Math.abs(a / b - 1) <= SCALE_AGREEMENT ? Math.sqrt(a * b) : null;
}

function statementFor(
  r: ComparableResult,
  i: number,
  kind: "different" | "placement",
  detail: string,
  advice: string | null,
  metrics: string[],
  scale: number | null,
): ComparisonStatement {
  const name = traceLabel(r, i);
  return {
    ...label(r, i),
    ...(r.cylinder != null ? { cylinder: r.cylinder } : {}),
    label: name,
    kind,
    text: `${name}: ${detail}`,
    detail,
    advice,
    metrics,
    scale,
  };
}

/**
 * Compares traces of one kind: results of another kind than the first are left out. See the module
 * comment for the rules.
 */
export function compareTraces(results: readonly ComparableResult[]): Comparison {
  if (results.length === 0) return { metrics: [], outliers: [], statements: [] };
  const kind = results[0].kind;
  const same = results.filter((r) => r.kind === kind);
  const specs = COMPARED_METRICS[kind] ?? [];
  const metrics: ComparedMetric[] = [];
  const flags: Flag[] = [];
  const table = new Map<string, (number | null)[]>();
  for (const spec of specs) {
    const values = same.map((r) => valueOf(r.summary, spec.metric));
    if (values.every((v) => v == null)) continue;
    table.set(spec.metric, values);
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
      if (z.outlier[k])
        flags.push({ trace: x.i, spec, value: x.v, median: z.median, score: Math.round(z.scores[k] * 100) / 100 });
    });
  }
  const outliers: Outlier[] = [];
  const statements: ComparisonStatement[] = [];
  same.forEach((r, i) => {
    const mine = flags.filter((f) => f.trace === i);
    if (!mine.length) return;
    const scale = kind === "secondary-ignition" ? placementScale(mine, table, i) : null;
    if (scale != null) {
      const words = placementPhrase(scale);
      statements.push(
        statementFor(
          r,
          i,
          "placement",
          words.detail,
          words.advice,
          mine.map((f) => f.spec.metric),
          scale,
        ),
      );
      return;
    }
    for (const f of mine)
      outliers.push({ ...label(r, i), metric: f.spec.metric, value: f.value, median: f.median, score: f.score });
    const phrases = mine.map((f) => {
      const others = othersMedian(table.get(f.spec.metric) ?? [], i) ?? f.median;
      return differencePhrase(f.spec.metric, kind, f.value, others, f.spec.unit === "*" ? r.unit : f.spec.unit);
    });
    statements.push(
      statementFor(
        r,
        i,
        "different",
        phrases.join(", "),
        null,
        mine.map((f) => f.spec.metric),
        null,
      ),
    );
  });
  // outliers grouped by metric, in the order of the metrics (as before statements existed)
  const order = new Map(specs.map((s, k) => [s.metric, k]));
  outliers.sort((a, b) => (order.get(a.metric) ?? 0) - (order.get(b.metric) ?? 0));
  return { metrics, outliers, statements };
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
