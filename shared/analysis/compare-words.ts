/**
 * Plain words for the comparison across cylinders: "Cylinder 3: firing line 40 % below the others,
 * burn time 44 % shorter". Each difference is said against the median of the other traces, in the
 * words of the trade; the statistic behind the flag stays in the comparison's `outliers`.
 */
import { formatQuantity } from "../trace/units";

/** How a trace is named in the sentences: its cylinder or coil from the settings, else its label or file. */
export function traceLabel(
  r: { cylinder?: number | null; coil?: number | null; label?: string; file?: string; traceId?: string },
  index: number,
): string {
  if (r.cylinder != null) return `Cylinder ${r.cylinder}`;
  if (r.coil != null) return `Coil ${r.coil}`;
  if (r.label) return r.label;
  if (r.file) return r.file.split(/[\\/]/).pop() || r.file;
  return `Trace ${index + 1}`;
}

const pct = (value: number, others: number) => Math.round((100 * Math.abs(value - others)) / Math.abs(others));

/** [more, less] words per metric, for "<name> N % <word>" phrases. */
const RELATIVE: Record<string, { name: string; up: string; down: string }> = {
  peak: { name: "firing line", up: "above the others", down: "below the others" },
  burnTimeMs: { name: "burn time", up: "longer", down: "shorter" },
  burnLevel: { name: "spark line", up: "higher", down: "lower" },
  dwellMs: { name: "dwell", up: "longer", down: "shorter" },
  firingToSpark: {
    name: "firing line against its own spark line",
    up: "taller than on the others",
    down: "lower than on the others",
  },
  pulseWidthMs: { name: "pulse width", up: "longer", down: "shorter" },
  turnOffPeak: { name: "turn-off spike", up: "higher", down: "lower" },
  amplitude: { name: "sensor signal", up: "stronger", down: "weaker" },
  toothPeriodMs: { name: "tooth period", up: "longer", down: "shorter" },
  peakToPeak: { name: "peak-to-peak", up: "larger", down: "smaller" },
  rms: { name: "RMS level", up: "higher", down: "lower" },
  frequencyHz: { name: "frequency", up: "higher", down: "lower" },
};

/**
 * One metric's difference in plain words, against the median of the other traces (`others`).
 * `unit` is the metric's unit (for phrases that give values).
 */
export function differencePhrase(metric: string, kind: string, value: number, others: number, unit: string): string {
  const dir = value >= others;
  if (metric === "oscillations") {
    if (value === 0) return `no coil ringing after the spark (the others ring ${fmtCount(others)} times)`;
    return `${fmtCount(value)} coil-ringing peaks against ${fmtCount(others)} on the others`;
  }
  if (metric === "sparkSlopePctPerMs") {
    const say = (x: number) => `${x >= 0 ? "rises" : "falls"} ${Math.abs(Math.round(x))} % of its level per ms`;
    return `spark line ${say(value)}, on the others it ${say(others)}`;
  }
  if (metric === "humpDelayMs") {
    const d = Math.abs(value - others);
    return `pintle closes ${formatQuantity(d / 1e3, "s")} ${dir ? "later" : "earlier"} than on the others`;
  }
  if (metric === "relativePct")
    return `compression ${Math.round(value)} % of the strongest against ${Math.round(others)} % on the others`;
  if (kind === "relative-compression" && metric === "peak") {
    if (others === 0) return `current rise per stroke ${formatQuantity(value, unit)}`;
    return `current rise per stroke ${pct(value, others)} % ${dir ? "above" : "below"} the others`;
  }
  const words = RELATIVE[metric];
  const name = words?.name ?? metric;
  if (others === 0 || !Number.isFinite(others))
    return `${name} ${formatQuantity(value, unit)} against none on the others`;
  return (
    `${name} ${pct(value, others)} % ` +
    `${dir ? (words?.up ?? "above the others") : (words?.down ?? "below the others")}`
  );
}

function fmtCount(x: number): string {
  return Number.isInteger(x) ? String(x) : x.toFixed(1);
}

/** The placement sentence: only the scale of the voltages differs. */
export function placementPhrase(scale: number): { detail: string; advice: string } {
  const p = Math.round(Math.abs(1 - scale) * 100);
  return {
    detail:
      `every voltage about ${p} % ${scale < 1 ? "lower" : "higher"} than on the others, with the same burn ` +
      `time, ringing and shape: this looks like where the pickup sat, not a fault in the cylinder`,
    advice:
      "Lay the pickup flat on top of the coil, in the same spot as on the others, and capture this cylinder " +
      "again before judging its voltages.",
  };
}
