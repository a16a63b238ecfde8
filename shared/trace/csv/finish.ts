/**
 * The last stage of reading an export: the sample rate (time column, stated rate or metadata), the
 * channels' names and units (header, then metadata), values written as ADC codes with a stated
 * scale, over-range samples, and the skipped rows — into a ParsedTrace.
 */
import { TraceParseError, type ParsedTrace, type TraceChannel, type UnitOrigin } from "../types";
import { normaliseUnit } from "../units";
import type { SampleStore } from "./accumulate";
import { isGenericValueName } from "./header";
import type { Metadata } from "./metadata";
import { noSampleRate, type Layout } from "./sniff";
import { LIST_LINES, listLines, plural, quote, tidyRate } from "./words";

export interface FinishInput {
  store: SampleStore;
  layout: Layout;
  meta: Metadata;
  /** ragged rows found above the data start */
  preRagged: number[];
  statedRateHz: number | undefined;
  tolerance: number;
  warnings: string[];
}

interface ChannelLabel {
  name: string;
  unit: string | null;
  unitFrom: UnitOrigin;
}

/** Names and units of the value columns, from the header and then from the metadata. */
export function channelLabels(layout: Layout, meta: Metadata): ChannelLabel[] {
  const nv = layout.valueIdx.length;
  const width = layout.to - layout.from;
  // `NAME=` / `UNIT=` lines: one per value column, or one per column (time too); a longer list
  // starts with names of something else (the logger, the file), so its last entries are the columns'
  const listed = (list: string[], k: number, col: number): string | undefined =>
    list.length === nv ? list[k] : list.length >= width ? list[list.length - width + col - layout.from] : undefined;
  const used = new Set<string>();
  return layout.valueIdx.map((col, k) => {
    const head = layout.heads[k];
    let name = head?.name ?? "";
    if (!name || (nv === 1 && isGenericValueName(name) && meta.source)) {
      const fromMeta =
        meta.namesByNumber.get(k + 1) ??
        meta.columnNames.get(col) ??
        listed(meta.names, k, col) ??
        (nv === 1 ? meta.source : null);
      if (fromMeta?.trim()) name = fromMeta.trim();
    }
    if (!name) name = layout.hasHeader ? `Column ${col + 1}` : String.fromCharCode(65 + k);
    const base = name;
    for (let d = 2; used.has(name); d++) name = `${base} (${d})`;
    used.add(name);
    let unit: string | null = head?.unit ?? null;
    let unitFrom: UnitOrigin = unit ? "header" : "none";
    if (!unit) {
      const m =
        meta.unitsByNumber.get(k + 1) ??
        meta.columnUnits.get(col) ??
        listed(meta.units, k, col) ??
        meta.unit?.byName.get(base) ??
        meta.unit?.all ??
        null;
      if (m) {
        unit = m;
        unitFrom = "metadata";
      }
    }
    return { name, unit, unitFrom };
  });
}

/** Sample rate, start time and (uneven time) the time array. */
function timing(inp: FinishInput, rows: number) {
  const { store, layout, meta, statedRateHz, tolerance, warnings } = inp;
  let t0 = 0;
  let sampleRateHz: number;
  let timeOut: Float64Array | null = null;
  if (store.time) {
    const t = store.time;
    const scale = timeUnitFromMetadata(inp, (rows - 1) / (t[rows - 1] - t[0]));
    if (scale !== 1) for (let i = 0; i < rows; i++) t[i] *= scale;
    // date/time stamps: time counted from the first one
    if (layout.clock) {
      const first = t[0];
      for (let i = 0; i < rows; i++) t[i] -= first;
      warnings.push(
        `the time column holds dates and times of day; time is counted from the first row's (line ${layout.firstDataLine})`,
      );
    }
    t0 = t[0];
    const span = t[rows - 1] - t0;
    const dt = span / (rows - 1);
    let maxDev = 0;
    for (let i = 1; i < rows - 1; i++) {
      const dev = Math.abs(t[i] - (t0 + i * dt));
      if (dev > maxDev) maxDev = dev;
    }
    if (maxDev <= tolerance * dt) {
      sampleRateHz = tidyRate(1 / dt);
    } else {
      sampleRateHz = (rows - 1) / span;
      timeOut = store.cap > rows * 1.125 ? t.slice(0, rows) : t.subarray(0, rows);
      warnings.push(
        `the time column is not evenly spaced (mean sample rate ${tidyRate(sampleRateHz)} Hz); every sample's time is kept`,
      );
    }
    if (statedRateHz !== undefined && Math.abs(statedRateHz - sampleRateHz) > 0.01 * sampleRateHz) {
      warnings.push(
        `the stated sample rate (${statedRateHz} Hz) differs from the file's time column (${tidyRate(sampleRateHz)} Hz); the time column was used`,
      );
    }
  } else if (statedRateHz !== undefined) {
    sampleRateHz = statedRateHz;
    if (meta.rate !== undefined && Math.abs(meta.rate - sampleRateHz) > 0.01 * sampleRateHz) {
      warnings.push(
        `line ${meta.rateLine}: the file states a sample rate of ${tidyRate(meta.rate)} Hz but ${sampleRateHz} Hz was given; the given rate was used`,
      );
    }
  } else if (meta.rate !== undefined) {
    sampleRateHz = tidyRate(meta.rate);
    warnings.push(`line ${meta.rateLine}: no time column; the sample rate ${sampleRateHz} Hz was taken from this line`);
  } else {
    throw noSampleRate(meta, layout.indexIdx.length > 0, layout.headerLine ?? layout.firstDataLine);
  }
  if (!store.time && meta.start) {
    t0 = meta.start.value;
    warnings.push(`line ${meta.start.line}: the first sample's time, ${t0} s, was taken from this line`);
  }
  return { t0, sampleRateHz, timeOut };
}

/**
 * A time column with no unit whose steps are 1000, 10⁶ or 10⁹ times the sample interval a metadata
 * line states is in ms, µs or ns (SI prefixes): the factor to seconds, else 1.
 */
function timeUnitFromMetadata(inp: FinishInput, rateFromColumn: number): number {
  const { layout, meta, warnings } = inp;
  if (layout.timeUnitStated || layout.clock || meta.rate === undefined || !(rateFromColumn > 0)) return 1;
  const ratio = rateFromColumn / meta.rate;
  for (const [f, unit] of [
    [1e-3, "ms"],
    [1e-6, "µs"],
    [1e-9, "ns"],
  ] as const) {
    if (Math.abs(ratio / f - 1) < 0.01) {
      warnings.push(
        `line ${meta.rateLine} states a sample interval ${unit === "ms" ? "1000" : unit === "µs" ? "10⁶" : "10⁹"} times shorter than the time column's steps; the time column was read in ${unit}`,
      );
      return f;
    }
  }
  return 1;
}

/**
 * Samples written as NaN (missing) filled in on a straight line between the samples beside them (the
 * first or last sample's value at the ends), with a warning naming the lines; more than the ragged
 * rows' allowance (10, or 0.1 % of the rows) is a refusal naming the column and the lines.
 */
function fillMissing(inp: FinishInput, j: number, v: Float32Array, rows: number, name: string): void {
  const { store, warnings } = inp;
  const k = store.missing[j];
  if (!k) return;
  const lines = store.missingLines[j];
  const allowed = Math.max(10, Math.floor(0.001 * rows));
  if (k > allowed) {
    throw new TraceParseError(
      "text-in-numeric-column",
      `${quote(name)} has ${k} cells written as NaN (not a number: missing samples), more than the ${allowed} ` +
        `that can be filled in; lines ${listLines(lines, k)}`,
      lines[0],
    );
  }
  let i = 0;
  while (i < rows) {
    if (!Number.isNaN(v[i])) {
      i++;
      continue;
    }
    let e = i;
    while (e < rows && Number.isNaN(v[e])) e++;
    const left = i > 0 ? v[i - 1] : v[e];
    const right = e < rows ? v[e] : left;
    for (let q = i; q < e; q++) v[q] = left + ((right - left) * (q - i + 1)) / (e - i + 1);
    i = e;
  }
  warnings.push(
    `${k} ${plural(k, "sample")} of ${name} ${plural(k, "was", "were")} written as NaN (missing): ` +
      `${plural(k, "line")} ${listLines(lines, k)}; filled in on a straight line between the samples beside them`,
  );
}

/** One channel: its array cut to size, over-range samples, ADC codes, min and max. */
function channelOf(inp: FinishInput, j: number, label: ChannelLabel, rows: number): TraceChannel {
  const { store, meta, warnings } = inp;
  const all = store.values[j];
  const v = store.cap > rows * 1.125 ? all.slice(0, rows) : all.subarray(0, rows);
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < rows; i++) {
    const x = v[i];
    if (x === Infinity || x === -Infinity) continue;
    if (x < min) min = x;
    if (x > max) max = x;
  }
  if (store.infinite[j] > 0 && Number.isFinite(min)) {
    for (let i = 0; i < rows; i++)
      if (v[i] === Infinity) v[i] = max;
      else if (v[i] === -Infinity) v[i] = min;
    const k = store.infinite[j];
    warnings.push(
      `${k} ${plural(k, "sample")} of ${label.name} ${plural(k, "was", "were")} written as infinity (over the scope's range); set to the channel's highest or lowest value`,
    );
  }
  fillMissing(inp, j, v, rows, label.name);
  let unit = label.unit;
  let unitFrom = label.unitFrom;
  let scaledFrom: string | null = null;
  const whole = store.whole[j] && store.infinite[j] === 0;
  if (whole && unitFrom !== "header" && meta.adc) {
    const f = meta.adc.value;
    for (let i = 0; i < rows; i++) v[i] *= f;
    min *= f;
    max *= f;
    unit = meta.adc.unit ?? unit;
    unitFrom = "metadata";
    scaledFrom = `ADC codes × ${f}${meta.adc.unit ? ` ${meta.adc.unit}` : ""} per code (line ${meta.adc.line})`;
    warnings.push(
      `line ${meta.adc.line}: ${label.name} holds whole numbers and the file states ${f}${meta.adc.unit ? ` ${meta.adc.unit}` : ""} per ADC code; the values were multiplied by it`,
    );
  } else if (
    whole &&
    unitFrom === "metadata" &&
    meta.verticalScale &&
    Math.max(Math.abs(min), Math.abs(max)) > 20 * meta.verticalScale
  ) {
    // a screen holds about ten divisions: whole numbers far beyond them are ADC codes, not the unit
    warnings.push(
      `${label.name} holds whole numbers up to ${Math.max(Math.abs(min), Math.abs(max))} where the screen holds about ±${5 * meta.verticalScale} ${unit} (${meta.verticalScale} ${unit}/div): they read as raw ADC codes, and the file states no scale per code, so they are kept as codes`,
    );
    unit = "counts";
  }
  const normal = normaliseUnit(unit);
  return {
    name: label.name,
    unit: normal,
    values: v,
    min: Number.isFinite(min) ? min : 0,
    max: Number.isFinite(max) ? max : 0,
    unitWritten: unit != null && normal !== unit ? unit : null,
    unitFrom,
    scaledFrom,
  };
}

export function finishTrace(inp: FinishInput): ParsedTrace {
  const { store, layout, meta, preRagged, warnings } = inp;
  const rows = store.n;
  const raggedCount = store.raggedCount + preRagged.length;
  const raggedLines = [...preRagged, ...store.raggedLines].slice(0, LIST_LINES);
  const detail = store.firstRaggedDetail || "has another column count";
  const allowed = Math.max(10, Math.floor(0.001 * (rows + raggedCount)));
  if (raggedCount > allowed) {
    throw new TraceParseError(
      "ragged-rows",
      `${raggedCount} rows have missing or extra columns (expected ${layout.to - layout.from}; line ${raggedLines[0]} ${preRagged.length ? "has another column count" : detail}); lines ${listLines(raggedLines, raggedCount)} — the file may be cut short or mixed`,
      raggedLines[0],
    );
  }
  if (raggedCount > 0) {
    warnings.push(
      `skipped ${raggedCount} ${plural(raggedCount, "row")} with missing or extra columns: ${plural(raggedCount, "line")} ${listLines(raggedLines, raggedCount)}`,
    );
  }
  if (rows < 2) {
    // the line of the data (its one row), where the tech looks for what is missing
    throw new TraceParseError(
      "too-few-samples",
      `the file has ${rows} data ${plural(rows, "row")}; a trace needs at least 2`,
      layout.firstDataLine,
    );
  }
  const { t0, sampleRateHz, timeOut } = timing(inp, rows);
  const labels = channelLabels(layout, meta);
  // a channel whose every cell is NaN holds no samples (a channel the scope had switched off)
  const empty = labels.map((_, j) => store.missing[j] >= rows);
  if (empty.every(Boolean)) {
    throw new TraceParseError(
      "text-in-numeric-column",
      `every value cell is NaN (not a number): the file holds no samples`,
      layout.firstDataLine,
    );
  }
  const channels: TraceChannel[] = [];
  labels.forEach((label, j) => {
    if (empty[j]) warnings.push(`${label.name} holds no samples (every cell NaN) and was left out`);
    else channels.push(channelOf(inp, j, label, rows));
  });
  return {
    samples: rows,
    sampleRateHz,
    t0,
    durationS: rows / sampleRateHz,
    time: timeOut,
    channels,
    warnings,
    droppedRows: raggedCount > 0 ? { count: raggedCount, lines: raggedLines } : null,
  };
}
