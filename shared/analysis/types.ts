/**
 * The analysis's result types. A leaf module: it imports nothing from the analysis, so every other
 * analysis module may import its types without an import cycle.
 *
 * Units: every level in a result (firing line, spark line, current rise, tooth amplitude, min/max…)
 * is in the result's `unit`, the channel's physical unit from the shared unit model
 * (shared/trace/units.ts `channelUnits`): kV at the plug with a capacitive pickup's kV/V, amperes
 * through a clamp's mV/A, or what the file's header states (a header in kV or A is never scaled
 * again), else volts at the scope. Settings and setting advice (volts/division, trigger level) are in
 * `scopeUnit`, the unit the tech sets on the scope. Times carry their unit in the name (…S, …Ms),
 * frequencies end in Hz, ratios and percentages say so.
 */
import type { TraceKind } from "../schemas/capture-settings";

export type { TraceKind } from "../schemas/capture-settings";

/** Median, min and max of a metric over the events; all null when no event has it. */
export interface MetricStats {
  median: number | null;
  min: number | null;
  max: number | null;
}

/** Generic measurements of a channel or a window of it. Levels in the result's `unit`. */
export interface Measurements {
  samples: number;
  startS: number;
  endS: number;
  min: number;
  max: number;
  peakToPeak: number;
  mean: number;
  rms: number;
  /** low and high state levels (histogram modes, IEEE Std 181-2011 §5.2) */
  baseLevel: number;
  topLevel: number;
  frequencyHz: number | null;
  periodS: number | null;
  dutyCyclePct: number | null;
  /** 10 % → 90 % of the transition between the state levels, averaged over transitions */
  riseTimeS: number | null;
  fallTimeS: number | null;
}

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
  | "unknown-wheel"
  | "tooth-count"
  | "damaged-tooth";

/**
 * One remark of the capture review or the measurements, with what to do about it. Messages are
 * plain words for a tech (no statistics); levels in the physical unit, settings in the scope's unit
 * with the physical value beside them. The safety caution appears once per trace, at the end of the
 * first advice that needs it (findings are ordered worst first).
 */
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
  /** volts/division in the scope's unit (`scopeUnit` per division), or null */
  voltsPerDiv: number | null;
  reason: string;
  /** the framing as the tech sets it: "1 ms/div, 200 mV/div on the scope (2 kV/div at the plug)" */
  text: string;
}

export interface Suggestions {
  oneEvent: FramingSuggestion | null;
  allCylinders: FramingSuggestion | null;
  /** a trigger level that would give a stable display, in the scope's unit (`scopeUnit`) */
  triggerLevel: number | null;
  /** the same level as the tech sets it, with the physical value beside it: "400 mV on the scope (4 kV at the plug)" */
  triggerText: string | null;
}

// ---------- secondary ignition ----------

export interface SecondaryEvent {
  /** time of the firing line's apex, s */
  timeS: number;
  /** firing line: the event's largest excursion from the baseline, in `unit` (a lower bound when clipped) */
  peak: number;
  /** spark duration: firing line to the end of the spark line, ms */
  burnTimeMs: number;
  /** median of the spark line above the baseline, in `unit` */
  burnLevel: number;
  /** coil-ringing peaks after the spark line on the firing line's side, ≥ 20 % of the first (a count) */
  oscillations: number;
  /** spark line slope, `unit` per ms (positive: rising away from the baseline) */
  sparkSlope: number | null;
  /** firing line ÷ its own spark line (a ratio, no unit; unchanged by the pickup's coupling) */
  firingToSpark: number | null;
  /** spark line slope relative to its level, % of the level per ms (unchanged by the pickup's coupling) */
  sparkSlopePctPerMs: number | null;
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
  /**
   * engine rpm from the spacing of firings: 120/(period × firingsPerCycle) — 120/period for one
   * cylinder's coil or lead, 60/period with waste spark, 120/(period × cylinders) for a pickup that
   * sees every cylinder's firing
   */
  rpm: number | null;
  /** firings the pickup sees per engine cycle (720°): 1, 2 with waste spark, the cylinders with everyCylinder */
  firingsPerCycle: number;
  /** per-metric median, min and max over the events, each in the event field's unit */
  peak: MetricStats;
  burnTimeMs: MetricStats;
  burnLevel: MetricStats;
  oscillations: MetricStats;
  sparkSlope: MetricStats;
  firingToSpark: MetricStats;
  sparkSlopePctPerMs: MetricStats;
  dwellMs: MetricStats;
  ringingHz: MetricStats;
  polarity: "positive" | "negative";
  /** baseline and noise RMS, in `unit` (data for experts, not for the tech's view) */
  baseline: number;
  noise: number;
}

// ---------- relative compression ----------

export interface CompressionEvent {
  timeS: number;
  /**
   * current rise of this compression stroke above the cranking current between strokes, in `unit`
   * (A through a clamp)
   */
  peak: number;
  /** peak as % of the highest stroke's */
  relativePct: number;
  /** position in the firing sequence, 1..cylinders, counted from the first stroke after the inrush */
  position: number;
  /**
   * the stroke came while the starter's inrush was still falling (more than a quarter of a typical
   * stroke's rise left): timed and counted, but not used for the relative compression per cylinder
   */
  onInrush: boolean;
}

export interface CompressionSummary {
  eventCount: number;
  /** cranking rpm = 120·f_peaks/cylinders */
  rpm: number | null;
  cylinders: number;
  /** current rise per stroke, in `unit` */
  peak: MetricStats;
  relativePct: MetricStats;
  /** relative compression per cylinder: the average % of the strongest stroke per position in the sequence */
  positions: { position: number; relativePct: number }[];
  /** positions below the suspect threshold (85 % of the strongest) */
  lowPositions: number[];
  inrushIgnored: boolean;
}

// ---------- injector ----------

export interface InjectorEvent {
  /** turn-on (the driver grounds the injector), s */
  timeS: number;
  /** driver on time: mid-level fall to mid-level rise, ms */
  pulseWidthMs: number;
  /** highest voltage of the turn-off spike, in `unit` (V) */
  turnOffPeak: number;
  /** the driver clamps the spike (a flat top of 40 µs or more) */
  clamped: boolean;
  /** the level the driver clamps at, in `unit`, when clamped */
  clampLevel: number | null;
  /** time from turn-off to the pintle-closing hump, ms; null when none */
  humpDelayMs: number | null;
  /** hump height above the supply, in `unit` */
  humpHeight: number | null;
}

export interface InjectorSummary {
  eventCount: number;
  /** from the spacing of pulses, assuming sequential injection (one pulse per 720°) */
  rpm: number | null;
  /** the supply (off) level, in `unit` */
  supplyV: number;
  pulseWidthMs: MetricStats;
  turnOffPeak: MetricStats;
  humpDelayMs: MetricStats;
  humpHeight: MetricStats;
  clamped: boolean;
}

// ---------- crank wheel ----------

/** A toothed wheel recognised from its gaps: N tooth positions, k of them missing at the gap. */
export interface CrankWheel {
  /** "60-2", "36-1"… */
  pattern: string;
  /** tooth positions per revolution (N: 60 on a 60-2 wheel) */
  positions: number;
  /** teeth missing at the gap (k: 2 on a 60-2 wheel); the gap spans k + 1 pitches */
  missing: number;
  /** teeth actually on the wheel (N − k: 58 on a 60-2 wheel) */
  teethPerRev: number;
  /** how it was recognised: teeth counted between two gaps, or one gap and the teeth beside it */
  from: "revolution" | "one-gap";
}

export interface CrankEvent {
  /** time of the missing-tooth gap (the last tooth before it), s */
  timeS: number;
  /** rpm over the revolution that follows the gap, when complete */
  rpm: number | null;
  /** teeth counted until the next gap (the wheel's teeth per revolution when healthy) */
  teeth: number | null;
  /** gap period / tooth period beside it (k + 1: 3 on a 60-2 wheel, 2 on a 36-1) */
  gapRatio: number;
}

export interface CrankSummary {
  eventCount: number;
  /**
   * rpm from the recognised wheel: 60 s over one revolution, or 60/(N·T) with T the tooth period;
   * null when the wheel is not recognised
   */
  rpm: number | null;
  /** the wheel recognised from its gaps, or null */
  wheel: CrankWheel | null;
  /** teeth (crossings) counted in the capture */
  toothCount: number;
  /** where the gaps are: times of the last tooth before each gap, s */
  gapTimesS: number[];
  toothPeriodMs: MetricStats;
  /** peak-to-peak of each tooth, in `unit` */
  amplitude: MetricStats;
  /** amplitude per 1000 rpm, `unit` per 1000 rpm (a VR sensor's output rises with speed) */
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
  /** the physical unit of every level in the result (kV at the plug, A through a clamp, V at the scope…) */
  unit: string;
  /** the unit the scope's settings are in (volts/division, trigger level): "V", "kV", "A"… */
  scopeUnit: string;
  /** how the unit was reached, for the trace's details ("Volts at the scope × 10 kV/V…"), or null */
  unitNote: string | null;
  /** the cylinder and coil from the capture settings, when given (names the trace in comparisons) */
  cylinder: number | null;
  coil: number | null;
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
  /** the pickup sees every cylinder's firing (a distributor's coil wire); overrides settings.everyCylinder */
  everyCylinder?: boolean;
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
  /** the metric's unit: the results' unit for levels, "ms", "Hz", "%", "%/ms", "ratio" or "count" */
  unit: string;
  median: number | null;
  values: ComparedValue[];
}

/** A trace that stands out on one metric: data for an expert's details view, not for the tech's text. */
export interface Outlier {
  file?: string;
  traceId?: string;
  metric: string;
  value: number;
  median: number;
  /** modified z-score (Iglewicz & Hoaglin, 1993) */
  score: number;
}

/**
 * A plain sentence about one trace that differs from the others, for a tech:
 * "Cylinder 3: firing line 40 % below the others, burn time 44 % shorter".
 */
export interface ComparisonStatement {
  traceId?: string;
  file?: string;
  /** the cylinder from the capture settings, when known */
  cylinder?: number;
  /** how the trace is named in `text`: "Cylinder 3", "Coil 2", the file's name or "Trace 2" */
  label: string;
  /**
   * "different": the trace differs from the others (its metrics are in `outliers`);
   * "placement": only the scale of its voltages differs (the pickup's coupling), not flagged as a fault
   */
  kind: "different" | "placement";
  /** the sentence with the label in front */
  text: string;
  /** the sentence without the label, for a view that names the trace its own way */
  detail: string;
  /** what to do, when there is something to do (placement: lay the pickup flat and capture again) */
  advice: string | null;
  /** the metrics the sentence speaks of (keys of the summary) */
  metrics: string[];
  /** placement: this trace's voltages ÷ the others' (0.75 = 25 % lower); null otherwise */
  scale: number | null;
}

export interface Comparison {
  metrics: ComparedMetric[];
  outliers: Outlier[];
  /** plain sentences, one per trace that differs (or only differs in scale), in the traces' order */
  statements: ComparisonStatement[];
}

export interface EventOutlier {
  event: number;
  timeS: number;
  metric: string;
  value: number;
  median: number;
  score: number;
}
