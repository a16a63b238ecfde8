/**
 * Waveform analysis: measurements, capture review and cylinder comparison. Pure TypeScript, used by
 * the server (at upload), the client (to render) and the CLI (scripts/analyze.ts).
 */
export { analyzeTrace, analysisUnits, channelInput, type AnalyzableTrace } from "./analyze";
export { compareTraces, compareEvents, COMPARED_METRICS, type ComparableResult } from "./compare";
export { guessKind, type KindGuess } from "./guess";
export { measure, measurePrepared, stateLevels, type Measurements } from "./measure";
export { SECONDARY_SAFETY, ENGINE_SAFETY } from "./findings";
export { RINGING_PEAK_FRACTION } from "./secondary";
export { LOW_COMPRESSION_PCT } from "./compression";
export { TEETH_60_2, KNOWN_WHEELS } from "./crank";
export {
  median,
  medianAbsoluteDeviation,
  metricStats,
  modifiedZScores,
  type MetricStats,
  type ModifiedZOptions,
  type ModifiedZResult,
} from "./stats";
export type * from "./types";
