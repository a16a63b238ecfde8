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
 * own spark line, the spark line's slope against its level. Those are compared first. Each trace
 * that none of them singles out has an established coupling scale: its firing line and spark line
 * against the median of such traces, when the two agree (within 15 %). A trace whose scale stands
 * out (by the same rule as an outlier) is not flagged: it gets a "placement" sentence with the
 * advice to lay the pickup flat and capture again. The voltages are then judged with each
 * established scale taken out, so that with few cylinders one placement coil cannot hide a real
 * fault (its own voltages would otherwise widen the spread every trace is judged against); a trace
 * whose scale is not established (its shape differs) is judged on its voltages as measured.
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

/** A trace's voltage scale against the reference traces, when its firing line and spark line agree. */
interface Coupling {
  /** established scale per trace (voltages ÷ the references' median), null when not established */
  scale: (number | null)[];
  /** the traces the scales are measured against: not singled out by a placement-free measure */
  refs: number[];
}

/**
 * The coupling scales of the secondary traces (see the module's note). `suspect` holds the traces
 * flagged on a placement-free measure: they are not references and get no scale.
 */
function couplingScales(table: Map<string, (number | null)[]>, count: number, suspect: Set<number>): Coupling {
  const peak = table.get("peak") ?? [];
  const level = table.get("burnLevel") ?? [];
  const refs: number[] = [];
  for (let i = 0; i < count; i++) {
    if (!suspect.has(i) && (peak[i] ?? 0) > 0 && (level[i] ?? 0) > 0) refs.push(i);
  }
  const scale: (number | null)[] = Array.from({ length: count }, () => null);
  if (refs.length < 2) return { scale, refs };
  const refPeak = median(refs.map((i) => peak[i] as number));
  const refLevel = median(refs.map((i) => level[i] as number));
  if (refPeak == null || refLevel == null || !(refPeak > 0) || !(refLevel > 0)) return { scale, refs };
  for (const i of refs) {
    const a = (peak[i] as number) / refPeak;
    const b = (level[i] as number) / refLevel;
    if (Math.abs(a / b - 1) <= SCALE_AGREEMENT) scale[i] = Math.sqrt(a * b);
  }
  return { scale, refs };
}

/** The table with each established coupling scale taken out of the voltage levels. */
function withoutCoupling(table: Map<string, (number | null)[]>, specs: MetricSpec[], scale: (number | null)[]) {
  const out = new Map(table);
  for (const spec of specs) {
    const values = table.get(spec.metric);
    if (!spec.scaled || !values) continue;
    out.set(
      spec.metric,
      values.map((v, i) => (v != null && scale[i] != null ? v / (scale[i] as number) : v)),
    );
  }
  return out;
}

/** The traces whose established scale stands out among the references' (outlier rule): placement. */
function placementScales(c: Coupling): Map<number, number> {
  const out = new Map<number, number>();
  const withScale = c.refs.filter((i) => c.scale[i] != null);
  const z = modifiedZScores(withScale.map((i) => c.scale[i] as number));
  if (!z) return out;
  withScale.forEach((i, k) => {
    if (!z.outlier[k]) return;
    const others = median(withScale.filter((j) => j !== i).map((j) => c.scale[j] as number));
    if (others != null && others > 0) out.set(i, (c.scale[i] as number) / others);
  });
  return out;
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

/** Each metric's per-trace values (the summary's medians) and the metrics' rows for the result. */
function metricTable(same: readonly ComparableResult[], specs: MetricSpec[]) {
  const metrics: ComparedMetric[] = [];
  const table = new Map<string, (number | null)[]>();
  for (const spec of specs) {
    const values = same.map((r) => valueOf(r.summary, spec.metric));
    if (values.every((v) => v == null)) continue;
    table.set(spec.metric, values);
    const present = values.filter((v): v is number => v != null);
    metrics.push({
      metric: spec.metric,
      unit: spec.unit === "*" ? same[0].unit : spec.unit,
      median: median(present),
      values: same.map((r, i) => ({ ...label(r, i), value: values[i] })),
    });
  }
  return { metrics, table };
}

/** The outliers of these metrics, judged on `judged` (values as compared), reported with `raw` values. */
function flagsOf(
  specs: MetricSpec[],
  judged: Map<string, (number | null)[]>,
  raw: Map<string, (number | null)[]>,
): Flag[] {
  const flags: Flag[] = [];
  for (const spec of specs) {
    const values = judged.get(spec.metric);
    if (!values) continue;
    const present = values.map((v, i) => ({ v, i })).filter((x): x is { v: number; i: number } => x.v != null);
    const z = modifiedZScores(
      present.map((x) => x.v),
      { resolution: spec.resolution },
    );
    if (!z) continue;
    present.forEach((x, k) => {
      if (!z.outlier[k]) return;
      const value = raw.get(spec.metric)?.[x.i] ?? x.v;
      flags.push({ trace: x.i, spec, value, median: z.median, score: Math.round(z.scores[k] * 100) / 100 });
    });
  }
  return flags;
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
  const order = new Map(specs.map((s, k) => [s.metric, k]));
  const { metrics, table } = metricTable(same, specs);
  let judged = table;
  let placement = new Map<number, number>();
  let flags: Flag[];
  if (kind === "secondary-ignition") {
    // placement-free measures first; then the voltages with each established coupling taken out
    const free = flagsOf(
      specs.filter((s) => !s.scaled),
      table,
      table,
    );
    const coupling = couplingScales(table, same.length, new Set(free.map((f) => f.trace)));
    placement = placementScales(coupling);
    judged = withoutCoupling(table, specs, coupling.scale);
    flags = [
      ...free,
      ...flagsOf(
        specs.filter((s) => s.scaled),
        judged,
        table,
      ),
    ];
  } else flags = flagsOf(specs, table, table);
  flags.sort((a, b) => (order.get(a.spec.metric) ?? 0) - (order.get(b.spec.metric) ?? 0));
  const outliers: Outlier[] = [];
  const statements: ComparisonStatement[] = [];
  same.forEach((r, i) => {
    const mine = flags.filter((f) => f.trace === i);
    const scale = placement.get(i);
    if (scale != null && !mine.length) {
      const words = placementPhrase(scale);
      statements.push(statementFor(r, i, "placement", words.detail, words.advice, ["peak", "burnLevel"], scale));
      return;
    }
    if (!mine.length) return;
    for (const f of mine)
      outliers.push({ ...label(r, i), metric: f.spec.metric, value: f.value, median: f.median, score: f.score });
    const phrases = mine.map((f) => {
      const others = othersMedian(judged.get(f.spec.metric) ?? [], i) ?? f.median;
      return differencePhrase(f.spec.metric, kind, f.value, others, f.spec.unit === "*" ? r.unit : f.spec.unit);
    });
    const metricsOf = mine.map((f) => f.spec.metric);
    statements.push(statementFor(r, i, "different", phrases.join(", "), null, metricsOf, null));
  });
  // outliers grouped by metric, in the order of the metrics (as before statements existed)
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
