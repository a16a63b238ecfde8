/**
 * The demo's captures, made by the project's own signal generators (demo/generators) with fixed
 * seeds, so every seed gives the same files and the same truth. Sizes are kept modest (tens of
 * thousands of samples) so the whole demo seeds in seconds.
 */
import {
  generateSecondary,
  type GeneratedCapture,
  type SecondaryFault,
  type SecondaryTruth,
} from "./generators/secondary";
import { generateCompression, type CompressionTruth } from "./generators/compression";
import { generateInjector, type InjectorTruth } from "./generators/injector";
import { generateCrank, type CrankTruth } from "./generators/crank";
import { renderCsv, type CsvOptions } from "./generators/csv";
import type { CaptureSettingsInput } from "../shared/schemas/capture-settings";

export interface DemoTrace<T = unknown> {
  /** the trace's name in the case */
  name: string;
  /** the file name as the technician's scope exported it */
  file: string;
  csv: string;
  settings: CaptureSettingsInput;
  truth: T;
  /** the planted fault of this capture, if any (for the tests and the scenario text) */
  fault: string | null;
}

function build<T>(
  name: string,
  file: string,
  g: GeneratedCapture<T>,
  extra: Partial<CaptureSettingsInput>,
  fault: string | null,
  csv: CsvOptions = {},
): DemoTrace<T> {
  return {
    name,
    file,
    csv: renderCsv(g.trace, { timeUnit: "ms", ...csv }),
    settings: { ...g.settings, ...extra },
    truth: g.truth,
    fault,
  };
}

/**
 * One secondary capture per coil (coil-on-plug, capacitive pickup at 10 kV per volt), every coil
 * healthy except the ones given in `faults` (cylinder → fault).
 */
export function coilSet(opts: {
  seed: number;
  cylinders: number;
  faults: Record<number, SecondaryFault>;
  sampleRateHz: number;
  rpm: number;
  events: number;
  filePrefix: string;
}): DemoTrace<SecondaryTruth>[] {
  const out: DemoTrace<SecondaryTruth>[] = [];
  for (let cyl = 1; cyl <= opts.cylinders; cyl++) {
    const fault = opts.faults[cyl] ?? "none";
    const g = generateSecondary({
      seed: opts.seed + cyl,
      sampleRateHz: opts.sampleRateHz,
      rpm: opts.rpm,
      events: opts.events,
      fault,
      kvPerVolt: 10,
    });
    out.push(
      build(
        `Coil ${cyl}`,
        `${opts.filePrefix}_cyl${cyl}.csv`,
        g,
        { cylinder: cyl, coil: cyl, kvPerVolt: 10, triggerLevel: 0.3, triggerSlope: "rising" },
        fault === "none" ? null : fault,
      ),
    );
  }
  return out;
}

/** Starter current through a clamp while cranking with the injectors disabled; one weak cylinder. */
export function compressionCapture(seed: number, lowPosition: number): DemoTrace<CompressionTruth> {
  const g = generateCompression({ seed, lowPosition, lowFactor: 0.7, cylinders: 4, durationS: 1.6 });
  return build(
    "Starter current, cranking (relative compression)",
    "cranking_current.csv",
    g,
    { triggerSource: "A" },
    `low compression at stroke position ${lowPosition}`,
  );
}

/** One injector's control side per cylinder; the given cylinder's pintle closes late (sticking). */
export function injectorSet(seed: number, cylinders: number, sticking: number): DemoTrace<InjectorTruth>[] {
  const out: DemoTrace<InjectorTruth>[] = [];
  for (let cyl = 1; cyl <= cylinders; cyl++) {
    const g = generateInjector({ seed: seed + cyl, sticking: cyl === sticking ? "late" : "none", events: 2 });
    out.push(
      build(
        `Injector ${cyl}`,
        `inj${cyl}_driver.csv`,
        g,
        { cylinder: cyl, circuit: `injector ${cyl} control` },
        cyl === sticking ? "sticking (late pintle close)" : null,
      ),
    );
  }
  return out;
}

/** Crankshaft VR sensor over a 60-2 wheel with one damaged tooth. */
export function crankCapture(seed: number, damagedTooth: number | null): DemoTrace<CrankTruth> {
  const g = generateCrank({ seed, damagedTooth, rpm: 1000, revolutions: 2.5 });
  return build(
    "Crank sensor at idle",
    "ckp_idle.csv",
    g,
    {},
    damagedTooth ? `damaged reluctor tooth ${damagedTooth}` : null,
  );
}
