import type { TraceKind } from "../schemas/capture-settings";
import type { MetricStats } from "./stats";
import type { Measurements } from "./measure";

export type { MetricStats } from "./stats";
export type { Measurements } from "./measure";
export type { TraceKind } from "../schemas/capture-settings";

export type Severity = "info" | "warning" | "problem";

export type FindingCode =
  | "clipped"
  | "inverted"
  | "undersampled"
  | "no-events"
  | "trigger-above-signal"
  | "trigger-below-noise"
  | "noisy"
  | "framing"
  | "erratic-firing"
  | "low-compression"
  | "slow-cranking"
  | "cylinders-assumed"
  | "clamped"
  | "no-pintle-hump"
  | "no-gap"
  | "tooth-count"
  | "damaged-tooth";

/** One remark of the capture review or the measurements, with what to do about it. */
export interface Finding {
  code: FindingCode;
  severity: Severity;
  message: string;
  advice: string;
}

/** A channel of samples to analyse: a ParsedTrace channel, or plain arrays. */
export interface SignalInput {
  values: ArrayLike<number>;
  sampleRateHz: number;
  t0?: number;
  time?: ArrayLike<number> | null;
  /** unit of the values as written in the file ("V", "mV", "kV", "A"…); volts when absent */
  unit?: string | null;
  name?: string;
}

/** A framing of the capture view that would show what is wanted. */
export interface FramingSuggestion {
  timePerDivS: number;
  voltsPerDiv: number | null;
  reason: string;
}

export interface Suggestions {
  oneEvent: FramingSuggestion | null;
  allCylinders: FramingSuggestion | null;
  /** a trigger level (in the scope's volts) that would give a stable display */
  triggerLevel: number | null;
}

// ---------- secondary ignition ----------

export interface SecondaryEvent {
  /** time of the firing line's peak, s */
  timeS: number;
  /** firing line height above the baseline, in `unit` */
  peak: number;
  /** spark duration: firing line to the end of the spark line, ms */
  burnTimeMs: number;
  /** median of the spark line, in `unit` */
  burnLevel: number;
  /** coil-ringing peaks after the spark line on the firing line's side, ≥ 20 % of the first */
  oscillations: number;
  /** spark line slope, `unit` per ms */
  sparkSlope: number | null;
  /** coil turn-on to firing line, ms; null when the turn-on is not visible */
  dwellMs: number | null;
  /** frequency of the coil ringing, Hz; null without ringing */
  ringingHz: number | null;
  /** spark line start and end (for drawing it), s */
  sparkStartS: number;
  sparkEndS: number;
  /** the firing line reached the top of the range: peak is a lower bound */
  clipped: boolean;
}

export interface SecondarySummary {
  eventCount: number;
  rpm: number | null;
  peak: MetricStats;
  burnTimeMs: MetricStats;
  burnLevel: MetricStats;
  oscillations: MetricStats;
  sparkSlope: MetricStats;
  dwellMs: MetricStats;
  ringingHz: MetricStats;
  polarity: "positive" | "negative";
  /** baseline and noise RMS, in `unit` */
  baseline: number;
  noise: number;
}

// ---------- relative compression ----------

export interface CompressionEvent {
  timeS: number;
  /** current rise of this compression stroke above the troughs beside it, in `unit` */
  peak: number;
  /** peak as % of the highest peak */
  relativePct: number;
  /** position in the firing sequence, 1..cylinders, counted from the first stroke after the inrush */
  position: number;
}

export interface CompressionSummary {
  eventCount: number;
  /** cranking rpm = 120·f_peaks/cylinders */
  rpm: number | null;
  cylinders: number;
  peak: MetricStats;
  relativePct: MetricStats;
  /** average % of the highest per position in the sequence */
  positions: { position: number; relativePct: number }[];
  /** positions below the suspect threshold (85 % of the highest) */
  lowPositions: number[];
  inrushIgnored: boolean;
}

// ---------- injector ----------

export interface InjectorEvent {
  timeS: number;
  pulseWidthMs: number;
  /** highest voltage of the turn-off spike, V */
  turnOffPeak: number;
  clamped: boolean;
  /** voltage the driver clamps at, when clamped */
  clampLevel: number | null;
  /** time from turn-off to the pintle-closing hump, ms; null when none */
  humpDelayMs: number | null;
  /** hump height above the supply, V */
  humpHeight: number | null;
}

export interface InjectorSummary {
  eventCount: number;
  /** from the spacing of pulses, assuming sequential injection (one pulse per 720°) */
  rpm: number | null;
  supplyV: number;
  pulseWidthMs: MetricStats;
  turnOffPeak: MetricStats;
  humpDelayMs: MetricStats;
  humpHeight: MetricStats;
  clamped: boolean;
}

// ---------- crank 60-2 ----------

export interface CrankEvent {
  /** time of the missing-tooth gap (the last tooth before it), s */
  timeS: number;
  /** rpm over the revolution that follows the gap, when complete */
  rpm: number | null;
  /** teeth counted until the next gap (58 on a healthy 60-2 wheel) */
  teeth: number | null;
  /** gap period / tooth period beside it (3 on a 60-2 wheel) */
  gapRatio: number;
}

export interface CrankSummary {
  eventCount: number;
  rpm: number | null;
  toothCount: number;
  toothPeriodMs: MetricStats;
  /** peak-to-peak of each tooth, in `unit` */
  amplitude: MetricStats;
  /** amplitude per 1000 rpm (a VR sensor's output rises with speed) */
  amplitudePerKrpm: number | null;
  /** least-squares slope of amplitude against rpm, `unit` per 1000 rpm; null when speed barely changed */
  amplitudeSlopePerKrpm: number | null;
  gapRatio: MetricStats;
  /** tooth numbers counted from the gap (1 = first tooth after it) */
  damagedTeeth: number[];
}

// ---------- generic ----------

export type GenericSummary = Measurements & { eventCount: 0; rpm: null };

// ---------- the result ----------

interface ResultBase {
  /** the analysed channel's name */
  channel: string;
  /** unit of the reported voltages or currents */
  unit: string;
  findings: Finding[];
  /** generic measurements of the whole channel (or window), in `unit` */
  measurements: Measurements;
  suggestions: Suggestions;
}

export interface SecondaryResult extends ResultBase {
  kind: "secondary-ignition";
  events: SecondaryEvent[];
  summary: SecondarySummary;
}
export interface CompressionResult extends ResultBase {
  kind: "relative-compression";
  events: CompressionEvent[];
  summary: CompressionSummary;
}
export interface InjectorResult extends ResultBase {
  kind: "injector";
  events: InjectorEvent[];
  summary: InjectorSummary;
}
export interface CrankResult extends ResultBase {
  kind: "crank";
  events: CrankEvent[];
  summary: CrankSummary;
}
export interface GenericResult extends ResultBase {
  kind: "generic";
  events: never[];
  summary: GenericSummary;
}

export type AnalysisResult = SecondaryResult | CompressionResult | InjectorResult | CrankResult | GenericResult;

export interface AnalyzeOptions {
  /** overrides settings.kind (default "secondary-ignition") */
  kind?: TraceKind;
  /** channel index or name (default the first) */
  channel?: number | string;
  /** kV at the plug per volt at the scope; overrides settings.kvPerVolt */
  kvPerVolt?: number;
  wasteSpark?: boolean;
  cylinders?: number;
  /** analyse only this time window, s */
  window?: { startS?: number; endS?: number };
}

// ---------- comparison ----------

export interface ComparedValue {
  file?: string;
  traceId?: string;
  value: number | null;
}

export interface ComparedMetric {
  metric: string;
  unit: string;
  median: number | null;
  values: ComparedValue[];
}

export interface Outlier {
  file?: string;
  traceId?: string;
  metric: string;
  value: number;
  median: number;
  /** modified z-score (Iglewicz & Hoaglin) */
  score: number;
}

export interface Comparison {
  metrics: ComparedMetric[];
  outliers: Outlier[];
}

export interface EventOutlier {
  event: number;
  timeS: number;
  metric: string;
  value: number;
  median: number;
  score: number;
}
