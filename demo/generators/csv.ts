/**
 * Renders a generated capture as the text of a scope's CSV export, in the variants the parser
 * accepts: delimiter, decimal comma, time unit and its header style, value unit, metadata lines
 * before the header, scientific notation, no time column.
 */
import type { ParsedTrace } from "../../shared/trace/types";

export interface CsvOptions {
  delimiter?: "," | ";" | "\t";
  decimal?: "." | ",";
  /** unit of the time column; "none" writes no time column (the sample rate must then be given) */
  timeUnit?: "s" | "ms" | "us" | "none";
  /** `Time (ms)`, `Time [ms]` or `Time_ms` */
  timeHeader?: "paren" | "bracket" | "suffix";
  /** unit the values are written in (the capture's values are volts or amperes) */
  valueUnit?: "V" | "mV" | "kV" | "A" | "mA";
  /** metadata lines written before the header, e.g. "Sample interval: 1e-6" */
  preamble?: string[];
  /** significant digits of the values (default 6) */
  digits?: number;
  scientific?: boolean;
  newline?: "\n" | "\r\n";
}

const TIME_SCALE = { s: 1, ms: 1e3, us: 1e6 } as const;
const VALUE_SCALE: Record<string, number> = { V: 1, mV: 1e3, kV: 1e-3, A: 1, mA: 1e3 };

function decimalsFor(step: number, digits: number): number {
  return Math.max(0, Math.min(12, digits - 1 - Math.floor(Math.log10(step))));
}

export function renderCsv(trace: ParsedTrace, opts: CsvOptions = {}): string {
  const delim = opts.delimiter ?? ",";
  const dec = opts.decimal ?? ".";
  if (dec === "," && delim === ",") throw new Error("a decimal comma needs ';' or tab as the delimiter");
  const timeUnit = opts.timeUnit ?? "s";
  const style = opts.timeHeader ?? "paren";
  const valueUnit = opts.valueUnit ?? "V";
  const nl = opts.newline ?? "\n";
  const digits = opts.digits ?? 6;
  const n = trace.samples;
  const head: string[] = [];
  if (timeUnit !== "none") {
    head.push(
      style === "paren" ? `Time (${timeUnit})` : style === "bracket" ? `Time [${timeUnit}]` : `Time_${timeUnit}`,
    );
  }
  for (const c of trace.channels) head.push(`${c.name} (${valueUnit})`);

  const vScale = VALUE_SCALE[valueUnit] ?? 1;
  const maxAbs = Math.max(1e-30, ...trace.channels.map((c) => Math.max(Math.abs(c.min), Math.abs(c.max)) * vScale));
  const vDecimals = decimalsFor(maxAbs, digits);
  const tScale = timeUnit === "none" ? 1 : TIME_SCALE[timeUnit];
  const dt = 1 / trace.sampleRateHz;
  // time precision: ten steps of resolution per sample interval, at least
  const tDecimals = timeUnit === "none" ? 0 : Math.max(0, Math.min(12, 1 - Math.floor(Math.log10(dt * tScale))));
  const fmtV = opts.scientific ? (x: number) => x.toExponential(digits - 1) : (x: number) => x.toFixed(vDecimals);
  const fix = dec === "," ? (s: string) => s.replace(".", ",") : (s: string) => s;

  const lines: string[] = [...(opts.preamble ?? []), head.join(delim)];
  const cols = trace.channels.map((c) => c.values);
  for (let i = 0; i < n; i++) {
    const t = trace.time ? trace.time[i] : trace.t0 + i * dt;
    let line = timeUnit === "none" ? "" : fix((t * tScale).toFixed(tDecimals));
    for (let k = 0; k < cols.length; k++) {
      const s = fix(fmtV(cols[k][i] * vScale));
      line = line === "" && timeUnit === "none" && k === 0 ? s : line + delim + s;
    }
    lines.push(line);
  }
  return lines.join(nl) + nl;
}
