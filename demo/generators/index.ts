/**
 * Capture generators with known truth, for the tests and the demo seed. Each is seeded (same seed,
 * same capture) and parameterised, and returns { trace: ParsedTrace, truth, settings }; renderCsv
 * writes any of them as a scope export (delimiter, decimal comma, time and value units, metadata).
 */
export {
  generateSecondary,
  ringingPeaksOf,
  type SecondaryOptions,
  type SecondaryTruth,
  type SecondaryEventTruth,
  type SecondaryFault,
  type GeneratedCapture,
} from "./secondary";
export {
  generateCompression,
  type CompressionOptions,
  type CompressionTruth,
  type CompressionStrokeTruth,
} from "./compression";
export { generateInjector, type InjectorOptions, type InjectorTruth, type InjectorPulseTruth } from "./injector";
export { generateCrank, type CrankOptions, type CrankTruth } from "./crank";
export { renderCsv, type CsvOptions } from "./csv";
export { makeTrace } from "./common";
