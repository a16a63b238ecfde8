/**
 * Waveform analysis figures:
 * - full analysis (analyzeTrace: events, measurements, capture review) of a generated
 *   1,000,000-sample secondary ignition capture (1 MS/s, 1 s at 750 rpm), as a ratio to the parse
 *   time of the same capture's CSV text timed in the same run (goal < 5 %);
 * - the same for a 1,000,000-sample crank sensor capture (60-2 wheel), against the same baseline;
 * - the cross-cylinder comparison of 16 results.
 * Parse and analyses run in alternating rounds; each figure is the minimum of its runs (see interleaved).
 */
import v8 from "node:v8";
import vm from "node:vm";
import { analyzeTrace } from "../shared/analysis/analyze";
import { compareTraces } from "../shared/analysis/compare";
import { parseTraceText } from "../shared/trace/parse";
import { renderCsv } from "../demo/generators/csv";
import { generateCrank } from "../demo/generators/crank";
import { generateSecondary } from "../demo/generators/secondary";
import { median, type BenchResult } from "./types";

/** A full garbage collection, so one step's garbage is not collected in the next one's time. */
function gcNow(): void {
  v8.setFlagsFromString("--expose-gc");
  (vm.runInNewContext("gc") as () => void)();
}

function once(f: () => unknown): number {
  const t = performance.now();
  f();
  return performance.now() - t;
}

function timeMs(runs: number, f: () => unknown): number {
  f(); // warm-up
  const xs: number[] = [];
  for (let k = 0; k < runs; k++) xs.push(once(f));
  return median(xs);
}

/**
 * Parse and analyses timed in alternating rounds (a full GC before each step), so that both see the
 * same machine. Each figure is the minimum over its runs: on a shared machine other work only ever
 * adds time, so the least-disturbed run is the best estimate of the code's own cost; the ratio
 * divides the two minima.
 */
function interleaved(rounds: number, parse: () => unknown, analyses: (() => unknown)[]) {
  parse();
  for (const a of analyses) a();
  const parseTimes: number[] = [];
  const times: number[][] = analyses.map(() => []);
  for (let r = 0; r < rounds; r++) {
    gcNow();
    parseTimes.push(once(parse));
    gcNow();
    analyses.forEach((a, k) => {
      for (let q = 0; q < 5; q++) times[k].push(once(a));
    });
  }
  const parseMs = Math.min(...parseTimes);
  const ms = times.map((xs) => Math.min(...xs));
  return { parseMs, ms, ratio: ms.map((m) => m / parseMs) };
}

export default async function bench(): Promise<BenchResult[]> {
  const g = generateSecondary({ seed: 1, sampleRateHz: 1e6, durationS: 1, rpm: 750, kvPerVolt: 10 });
  const text = renderCsv(g.trace);
  const parsed = parseTraceText(text);
  if (parsed.samples < 1_000_000) throw new Error(`expected 1,000,000 samples, got ${parsed.samples}`);
  const settings = { kvPerVolt: 10, voltsPerDiv: 0.5, timePerDivS: 0.1, triggerLevel: 0.3 };
  const events = (analyzeTrace(parsed, settings).summary as { eventCount: number }).eventCount;
  // 1 s at 1 MS/s and 1000 rpm: 1000/60 revolutions
  const crank = generateCrank({ seed: 2, sampleRateHz: 1e6, rpm: 1000, revolutions: 1000 / 60 });
  const run = interleaved(5, () => parseTraceText(text), [
    () => analyzeTrace(parsed, settings),
    () => analyzeTrace(crank.trace, {}, { kind: "crank" }),
  ]);
  const parseMs = run.parseMs;
  const [analysisMs, crankMs] = run.ms;
  const [ratio, crankRatio] = run.ratio;

  const results = Array.from({ length: 16 }, (_, i) => ({
    file: `c${i}.csv`,
    ...analyzeTrace(generateSecondary({ seed: 10 + i, events: 2, rpm: 3000 }).trace),
  }));
  const compareMs = timeMs(20, () => compareTraces(results));

  return [
    { name: "parse of the capture's CSV text (1,000,000 rows)", value: parseMs, unit: "ms" },
    {
      name: `full analysis of a 1,000,000-sample secondary capture (${events} firing events)`,
      value: analysisMs,
      unit: "ms",
      baseline: "parse of the same capture",
      ratio,
      goal: "ratio < 0.05",
      pass: ratio < 0.05,
    },
    {
      name: `full analysis of a ${crank.trace.samples.toLocaleString("en")}-sample crank capture`,
      value: crankMs,
      unit: "ms",
      baseline: "parse of the secondary capture",
      ratio: crankRatio,
      goal: "ratio < 0.05",
      pass: crankRatio < 0.05,
    },
    { name: "comparison of 16 cylinders", value: compareMs, unit: "ms" },
  ];
}
