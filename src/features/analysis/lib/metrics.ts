import type { AnalysisResult } from "../../../../shared/analysis/types";
import { toPhysical, type ChannelUnits } from "../../../lib/physical-units";

export interface MetricDef {
  /** key in the summary (a MetricStats) */
  key: string;
  label: string;
  /** unit; "$" is replaced by the result's unit */
  unit: string;
  /** the column in the per-event table */
  eventKey?: string;
  integer?: boolean;
}

/** The per-event metrics of each kind, in the order a diagnostician reads them. */
export const metricsByKind: Record<AnalysisResult["kind"], MetricDef[]> = {
  "secondary-ignition": [
    { key: "peak", label: "Firing line", unit: "$", eventKey: "peak" },
    { key: "burnTimeMs", label: "Burn time", unit: "ms", eventKey: "burnTimeMs" },
    { key: "burnLevel", label: "Spark line level", unit: "$", eventKey: "burnLevel" },
    { key: "sparkSlope", label: "Spark line slope", unit: "$/ms", eventKey: "sparkSlope" },
    { key: "oscillations", label: "Coil oscillations", unit: "", eventKey: "oscillations", integer: true },
    { key: "ringingHz", label: "Ringing frequency", unit: "Hz", eventKey: "ringingHz" },
    { key: "dwellMs", label: "Dwell", unit: "ms", eventKey: "dwellMs" },
  ],
  "relative-compression": [
    { key: "peak", label: "Current rise per stroke", unit: "$", eventKey: "peak" },
    { key: "relativePct", label: "Relative to the highest", unit: "%", eventKey: "relativePct" },
  ],
  injector: [
    { key: "pulseWidthMs", label: "Pulse width", unit: "ms", eventKey: "pulseWidthMs" },
    { key: "turnOffPeak", label: "Turn-off peak", unit: "V", eventKey: "turnOffPeak" },
    { key: "humpDelayMs", label: "Pintle hump after turn-off", unit: "ms", eventKey: "humpDelayMs" },
    { key: "humpHeight", label: "Pintle hump height", unit: "V", eventKey: "humpHeight" },
  ],
  crank: [
    { key: "toothPeriodMs", label: "Tooth period", unit: "ms" },
    { key: "amplitude", label: "Tooth amplitude", unit: "$" },
    { key: "gapRatio", label: "Gap ratio", unit: "×", eventKey: "gapRatio" },
  ],
  generic: [],
};

/** Names of comparison metrics (the analysis's keys) for people. */
export const metricLabels: Record<string, string> = {
  peak: "Firing line",
  burnTimeMs: "Burn time",
  burnLevel: "Spark line",
  sparkSlope: "Spark slope",
  oscillations: "Oscillations",
  ringingHz: "Ringing",
  dwellMs: "Dwell",
  relativePct: "Relative compression",
  pulseWidthMs: "Pulse width",
  turnOffPeak: "Turn-off peak",
  humpDelayMs: "Hump delay",
  humpHeight: "Hump height",
  toothPeriodMs: "Tooth period",
  amplitude: "Amplitude",
  gapRatio: "Gap ratio",
  rpm: "rpm",
};

export function metricLabel(key: string): string {
  return (
    metricLabels[key] ??
    key
      .replace(/([a-z])([A-Z])/g, "$1 $2")
      .replace(/Ms$/, "")
      .toLowerCase()
  );
}

export const resolveUnit = (u: string, resultUnit: string) => u.replace("$", resultUnit);

/**
 * A metric in the channel's physical unit (shared/trace/units), the unit every view of the trace
 * shows: a value in the result's unit ("$", "$/ms") is converted when the channel's unit model is
 * known; other units (ms, Hz, %, V of an injector's supply) are kept.
 */
export function physicalMetric(
  x: number | null | undefined,
  defUnit: string,
  resultUnit: string,
  cu?: ChannelUnits | null,
): { value: number | null | undefined; unit: string } {
  if (!defUnit.includes("$")) return { value: x, unit: defUnit };
  if (!cu) return { value: x, unit: resolveUnit(defUnit, resultUnit) };
  return { value: typeof x === "number" ? toPhysical(x, resultUnit, cu) : x, unit: defUnit.replace("$", cu.unit) };
}

/** Narrowing: does this stored value look like an analysis result? */
export function isAnalysisResult(x: unknown): x is AnalysisResult {
  return (
    !!x &&
    typeof x === "object" &&
    "kind" in x &&
    "summary" in x &&
    Array.isArray((x as { findings?: unknown }).findings)
  );
}
