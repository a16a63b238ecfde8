import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import Papa from "papaparse";
import { createTraceAccumulator, detectDelimiter, parseColumnHeader, parseTraceText, sampleRateFromMetadata } from "../../../shared/trace/parse";
import { TraceParseError, sampleTime, type ParsedTrace } from "../../../shared/trace/types";

const fixture = (name: string) => fs.readFileSync(path.join(__dirname, "../../fixtures/traces", name), "utf8");
const f32 = (xs: number[]) => Array.from(Float32Array.from(xs));
const values = (t: ParsedTrace, c = 0) => Array.from(t.channels[c].values);

/** Runs fn and returns the TraceParseError it throws. */
function refusal(fn: () => unknown): TraceParseError {
  try {
    fn();
  } catch (e) {
    expect(e).toBeInstanceOf(TraceParseError);
    return e as TraceParseError;
  }
  throw new Error("expected a TraceParseError");
}

// Sources for the checks below:
// - SI prefixes (milli 1e-3, micro 1e-6, nano 1e-9): BIPM, The International System of Units,
//   9th edition (2019), Table 7.
// - Decimal comma as the decimal sign: ISO 80000-1:2009 §7.3.2 (comma or point on the line).
// - Scientific notation ("1.5E+01", "-2.5e-1"): ECMA-262 StringNumericLiteral grammar.
// - Delimited text: RFC 4180 (comma-separated fields, one record per line, optional header line,
//   quoted fields); tab-separated: IANA media type text/tab-separated-values.
// - Sample rate = 1 / sample interval (definition).

describe("parseTraceText — accepted variants", () => {
  it("reads a comma-separated export with a header, units and scientific notation", () => {
    const t = parseTraceText(fixture("comma-seconds.csv"));
    expect(t.samples).toBe(5);
    // samples 10 µs apart → 1 / 10e-6 s = 100 kHz (definition of sample rate)
    expect(t.sampleRateHz).toBe(100_000);
    expect(t.t0).toBe(0);
    expect(t.time).toBeNull();
    expect(t.durationS).toBeCloseTo(5 / 100_000, 15);
    expect(t.channels.map((c) => [c.name, c.unit])).toEqual([
      ["Channel A", "V"],
      ["Channel B", "V"],
    ]);
    // "1.5E+01" = 15 and "-2.5e-1" = -0.25 (ECMA-262 numeric literal grammar)
    expect(values(t, 0)).toEqual(f32([0.12, 0.25, 15, 3.75, -0.25]));
    expect(values(t, 1)).toEqual(f32([-1.5, -1.25, -1.0, -0.75, -0.5]));
    expect(t.channels[0].min).toBeCloseTo(-0.25, 6);
    expect(t.channels[0].max).toBe(15);
    expect(t.warnings).toEqual([]);
  });

  it("reads `;` with decimal comma after metadata, a comment and a blank line; time in ms", () => {
    const t = parseTraceText(fixture("semicolon-decimal-comma.csv"));
    expect(t.samples).toBe(4);
    // "0,002" ms = 0.002 ms = 2e-6 s (ISO 80000-1 decimal comma; milli = 1e-3, BIPM Table 7) → 500 kHz
    expect(t.sampleRateHz).toBe(500_000);
    expect(t.channels).toHaveLength(1);
    expect(t.channels[0].name).toBe("Channel A");
    expect(t.channels[0].unit).toBe("V");
    // "12,5" = 12.5, "-1,5E-01" = -0.15 (decimal comma, ISO 80000-1 §7.3.2)
    expect(values(t)).toEqual(f32([12.5, 13.0, -0.15, 0]));
  });

  it("reads tab-separated text with a `_us` time suffix and a [kV] unit", () => {
    const t = parseTraceText(fixture("tab-microseconds.tsv"));
    // 5 µs apart → 200 kHz (micro = 1e-6, BIPM Table 7)
    expect(t.sampleRateHz).toBe(200_000);
    expect(t.channels[0]).toMatchObject({ name: "A", unit: "kV" });
    expect(values(t)).toEqual(f32([0.5, 1.0, 12.25, -0.75]));
  });

  it.each([
    ["Time (s)", 1],
    ["Time (ms)", 1e-3],
    ["Time (us)", 1e-6],
    ["Time (\u00b5s)", 1e-6], // MICRO SIGN
    ["Time (\u03bcs)", 1e-6], // GREEK SMALL LETTER MU
    ["Time (ns)", 1e-9],
    ["Time [ms]", 1e-3],
    ["time_s", 1],
    ["time_ms", 1e-3],
    ["t_us", 1e-6],
    ["Time", 1], // seconds when no unit
    ["Seconds", 1],
  ])("scales the time column %s by %d to seconds (SI prefixes, BIPM SI Brochure Table 7)", (head, scale) => {
    // three samples 1, 3, 5 units apart: uneven, so every time is kept and can be checked
    const t = parseTraceText(`${head},A\n1,0\n3,1\n6,2\n`);
    expect(t.time).not.toBeNull();
    expect(Array.from(t.time!)).toEqual([1 * scale, 3 * scale, 6 * scale]);
    expect(t.t0).toBe(1 * scale);
  });

  it("takes the time column by name wherever it is", () => {
    const t = parseTraceText("Channel A (V),Time (ms)\n5,0\n6,1\n7,2\n");
    expect(t.sampleRateHz).toBe(1000);
    expect(t.channels.map((c) => c.name)).toEqual(["Channel A"]);
    expect(values(t)).toEqual([5, 6, 7]);
  });

  it("reads a sample-number column as such, not as a channel", () => {
    const t = parseTraceText("Sample,Channel A (V)\n0,1.5\n1,2.5\n2,3.5\n", { sampleRateHz: 1000 });
    expect(t.channels.map((c) => c.name)).toEqual(["Channel A"]);
    expect(values(t)).toEqual([1.5, 2.5, 3.5]);
    expect(t.warnings.join(" ")).toMatch(/column 1 \("Sample"\) was read as a sample number/);
  });

  it("reads a units row under the names row", () => {
    const t = parseTraceText(fixture("units-row.csv"));
    // 1 ms apart → 1 kHz
    expect(t.sampleRateHz).toBe(1000);
    expect(t.channels[0]).toMatchObject({ name: "Channel A", unit: "V" });
  });

  it("uses the stated sample rate when there is no time column", () => {
    const t = parseTraceText(fixture("no-time-column.csv"), { sampleRateHz: 50_000 });
    expect(t.sampleRateHz).toBe(50_000);
    expect(t.t0).toBe(0);
    expect(t.time).toBeNull();
    expect(t.channels.map((c) => [c.name, c.unit])).toEqual([
      ["Channel A", "V"],
      ["Channel B", "A"],
    ]);
    // sample i at i / rate
    expect(sampleTime(t, 2)).toBeCloseTo(2 / 50_000, 15);
    expect(t.durationS).toBeCloseTo(3 / 50_000, 15);
  });

  it("takes the sample interval from a metadata line when there is no time column and no stated rate", () => {
    const t = parseTraceText(fixture("no-time-sample-interval.csv"));
    // interval 2e-6 s → rate 1 / 2e-6 = 500 kHz
    expect(t.sampleRateHz).toBe(500_000);
    expect(values(t)).toEqual([1, 1.5, 2, 2.5]);
    expect(t.warnings.join(" ")).toMatch(/line 1/);
  });

  it("prefers the stated sample rate over a metadata line and warns when they disagree", () => {
    const t = parseTraceText(fixture("no-time-sample-interval.csv"), { sampleRateHz: 1e6 });
    expect(t.sampleRateHz).toBe(1e6);
    expect(t.warnings.join(" ")).toMatch(/line 1: the file states a sample rate of 500000 Hz/);
  });

  it("keeps the time array when time is uneven", () => {
    const t = parseTraceText(fixture("uneven-time.csv"));
    expect(t.time).not.toBeNull();
    expect(Array.from(t.time!)).toEqual([0, 0.001, 0.003, 0.004, 0.01]);
    // mean rate (n − 1) / (t_last − t_first) = 4 / 0.01 s
    expect(t.sampleRateHz).toBeCloseTo(400, 9);
    expect(t.warnings.join(" ")).toMatch(/not evenly spaced/);
  });

  it("treats printed time with rounding below the tolerance as uniform", () => {
    // 1 MHz with times printed to 7 significant digits: rounding error < 0.5e-7 of the value ≪ 5 % of 1 µs
    const rows = Array.from({ length: 200 }, (_, i) => `${(0.0123 + i * 1e-6).toPrecision(7)},${i}`);
    const t = parseTraceText(`Time (s),A\n${rows.join("\n")}\n`);
    expect(t.time).toBeNull();
    expect(t.sampleRateHz).toBe(1e6);
    expect(t.t0).toBeCloseTo(0.0123, 12);
  });

  it("reads metadata lines before the header, whatever their column count", () => {
    const text = "Model,XYZ\nSerial,12\n# comment, with a comma\nSample interval: 1e-6\n\nTime (us),Channel A (V),B (V)\n0,1,2\n1,2,3\n2,3,4\n";
    const t = parseTraceText(text);
    expect(t.samples).toBe(3);
    expect(t.sampleRateHz).toBe(1e6);
    expect(t.channels.map((c) => c.name)).toEqual(["Channel A", "B"]);
  });

  it("reads a file without a header: column 1 as time in seconds, with a warning", () => {
    const t = parseTraceText("0.0,1\n0.5,2\n1.0,3\n");
    expect(t.sampleRateHz).toBe(2);
    expect(t.channels.map((c) => c.name)).toEqual(["A"]);
    expect(t.warnings[0]).toMatch(/line 1: the file has no header; column 1 was taken as time/);
  });

  it("reads a file without a header as values only when a sample rate is stated", () => {
    const t = parseTraceText("0.0,1\n0.5,2\n1.0,3\n", { sampleRateHz: 10 });
    expect(t.channels.map((c) => c.name)).toEqual(["A", "B"]);
    expect(values(t, 1)).toEqual([1, 2, 3]);
  });

  it("accepts CRLF line endings, a BOM, quoted fields (RFC 4180) and a trailing delimiter", () => {
    const text = '\uFEFF"Time (s)","Channel A (V)",\r\n"0","1.5",\r\n"0.1","2.5",\r\n"0.2","3.5",\r\n';
    const t = parseTraceText(text);
    expect(t.sampleRateHz).toBe(10);
    expect(t.channels[0].name).toBe("Channel A");
    expect(values(t)).toEqual([1.5, 2.5, 3.5]);
  });

  it("accepts up to 8 value columns", () => {
    const head = ["Time (s)", ...Array.from({ length: 8 }, (_, i) => `Ch${i + 1} (V)`)].join(",");
    const rows = [0, 1, 2].map((r) => [r, 1, 2, 3, 4, 5, 6, 7, 8].join(",")).join("\n");
    const t = parseTraceText(`${head}\n${rows}\n`);
    expect(t.channels).toHaveLength(8);
    expect(values(t, 7)).toEqual([8, 8, 8]);
  });

  it("skips a few short rows with a warning naming the lines", () => {
    const rows = Array.from({ length: 1000 }, (_, i) => `${i * 1e-3},${i % 7}`);
    rows[500] = "0.5"; // line 502
    const text = `Time (s),A\n${rows.join("\n")}\n1.000`; // cut short at the end: line 1002
    const t = parseTraceText(text);
    expect(t.samples).toBe(999);
    expect(t.warnings.join(" ")).toMatch(/skipped 2 rows with missing or extra columns: lines 502, 1002/);
    // a skipped row leaves a gap in time, which is kept
    expect(t.time).not.toBeNull();
  });

  it("skips blank lines inside and after the data", () => {
    const t = parseTraceText("Time,A\n0,1\n\n1,2\n2,3\n\n\n");
    expect(t.samples).toBe(3);
    expect(t.warnings).toEqual([]);
  });
});

describe("parseTraceText — refusals name the code and the line", () => {
  it("refuses an empty file", () => {
    expect(refusal(() => parseTraceText(fixture("refuse-empty.csv")))).toMatchObject({ code: "empty-file", line: null });
    expect(refusal(() => parseTraceText("\n \n\n")).code).toBe("empty-file");
  });

  it("refuses a file with no rows of numbers", () => {
    expect(refusal(() => parseTraceText(fixture("refuse-no-numeric-rows.csv")))).toMatchObject({ code: "no-numeric-rows" });
    expect(refusal(() => parseTraceText("Time (s),Channel A (V)\n")).code).toBe("no-numeric-rows");
  });

  it("refuses text in a numeric column, naming the line and the column", () => {
    const e = refusal(() => parseTraceText(fixture("refuse-text-in-column.csv")));
    expect(e.code).toBe("text-in-numeric-column");
    expect(e.line).toBe(4);
    expect(e.message).toMatch(/^line 4: column 2 \("Channel A"\) has "spark", which is not a number/);
  });

  it("refuses text in the time column and text far into the data", () => {
    const rows = Array.from({ length: 100 }, (_, i) => `${i},${i}`);
    rows[60] = "sixty,60"; // line 62
    const e = refusal(() => parseTraceText(`Time,A\n${rows.join("\n")}\n`));
    expect(e).toMatchObject({ code: "text-in-numeric-column", line: 62 });
    expect(e.message).toMatch(/time column/);
  });

  it("refuses text in the second data row (not mistaken for a header)", () => {
    const e = refusal(() => parseTraceText(`Time,A\n0,1\n1,x\n${Array.from({ length: 30 }, (_, i) => `${i + 2},${i}`).join("\n")}`));
    expect(e).toMatchObject({ code: "text-in-numeric-column", line: 3 });
  });

  it("refuses time that does not increase, naming the line", () => {
    const e = refusal(() => parseTraceText(fixture("refuse-time-not-increasing.csv")));
    expect(e).toMatchObject({ code: "time-not-increasing", line: 5 });
    expect(refusal(() => parseTraceText("Time,A\n0,1\n2,2\n1,3\n"))).toMatchObject({ code: "time-not-increasing", line: 4 });
  });

  it("refuses ragged rows beyond the tolerance (more than 10 rows and more than 0.1 %)", () => {
    const rows = Array.from({ length: 1000 }, (_, i) => `${i},${i}`);
    for (let k = 0; k < 11; k++) rows[100 + k * 10] = `${100 + k * 10},1,2`; // lines 102, 112, …
    const e = refusal(() => parseTraceText(`Time,A\n${rows.join("\n")}\n`));
    expect(e).toMatchObject({ code: "ragged-rows", line: 102 });
    expect(e.message).toMatch(/11 rows have missing or extra columns \(expected 2; line 102 has 3 columns\)/);
    // ten are still tolerated
    rows[200] = "200,200";
    expect(parseTraceText(`Time,A\n${rows.join("\n")}\n`).samples).toBe(990);
  });

  it("tolerates up to 0.1 % ragged rows in a long file", () => {
    const rows = Array.from({ length: 20_000 }, (_, i) => `${i},${i}`);
    for (let k = 0; k < 20; k++) rows[1000 * k + 5] = "1";
    const t = parseTraceText(`Time,A\n${rows.join("\n")}\n`);
    expect(t.samples).toBe(19_980);
    rows[6] = "1"; // 21 > 0.1 % of 20,000
    expect(refusal(() => parseTraceText(`Time,A\n${rows.join("\n")}\n`)).code).toBe("ragged-rows");
  });

  it("refuses more than 8 value columns", () => {
    expect(refusal(() => parseTraceText(fixture("refuse-too-many-columns.csv")))).toMatchObject({ code: "too-many-columns", line: 1 });
  });

  it("refuses a file with no time column and no sample rate, saying what to do", () => {
    const e = refusal(() => parseTraceText(fixture("no-time-column.csv")));
    expect(e).toMatchObject({ code: "no-sample-rate", line: 1 });
    expect(e.message).toMatch(/enter the sample rate/);
  });

  it("refuses a time column with a unit it does not know", () => {
    expect(refusal(() => parseTraceText("Time (div),A\n0,1\n1,2\n"))).toMatchObject({ code: "unknown-time-unit", line: 1 });
  });

  it("refuses a time column without value columns, and a single sample", () => {
    expect(refusal(() => parseTraceText("Time (s)\n0\n1\n2\n")).code).toBe("no-value-columns");
    expect(refusal(() => parseTraceText("Time (s),A\n0,1\n")).code).toBe("too-few-samples");
  });
});

describe("building blocks", () => {
  it("detects the delimiter from the data lines", () => {
    expect(detectDelimiter("a,b\n1.5,2\n3,4\n")).toBe(",");
    expect(detectDelimiter("a;b\n1,5;2\n3;4\n")).toBe(";");
    expect(detectDelimiter("a\tb\n1,5\t2\n3\t4\n")).toBe("\t");
  });

  it("splits names and units", () => {
    expect(parseColumnHeader("Channel A (V)")).toEqual({ name: "Channel A", unit: "V" });
    expect(parseColumnHeader("A [kV]")).toEqual({ name: "A", unit: "kV" });
    expect(parseColumnHeader("time_ms")).toEqual({ name: "time", unit: "ms" });
    expect(parseColumnHeader("Channel_A")).toEqual({ name: "Channel_A", unit: null });
  });

  it.each([
    ["Sample interval: 1e-6", 1e6],
    ["Sample interval (us): 2", 500_000],
    ["Sampling interval,5 ns", 2e8],
    ["Sample rate: 1 MHz", 1e6],
    ["Sample rate;2,5 kS/s", 2500],
    ["Model: XYZ", undefined],
  ])("reads the sample rate from %s", (line, rate) => {
    const got = sampleRateFromMetadata(line);
    if (rate === undefined) expect(got).toBeUndefined();
    else expect(got).toBeCloseTo(rate, 6);
  });

  it("the accumulator takes rows from papaparse's own chunk callback and gives the same trace", () => {
    const text = fixture("semicolon-decimal-comma.csv");
    const acc = createTraceAccumulator();
    // papaparse runs `chunk` on strings too (its string streamer); its typings only list it for files
    const config = { delimiter: ";", chunkSize: 16, chunk: (r: Papa.ParseResult<string[]>) => acc.pushRows(r.data) };
    Papa.parse<string[]>(text, config as unknown as Papa.ParseConfig<string[]>);
    const viaRows = acc.finish();
    const viaText = parseTraceText(text);
    expect(viaRows.samples).toBe(viaText.samples);
    expect(viaRows.sampleRateHz).toBe(viaText.sampleRateHz);
    expect(values(viaRows)).toEqual(values(viaText));
  });

  it("gives the same trace whatever the text chunking", () => {
    const text = fixture("semicolon-decimal-comma.csv") + Array.from({ length: 5000 }, (_, i) => `${(0.008 + i * 0.002).toFixed(3).replace(".", ",")};${i % 11},5`).join("\n");
    const whole = parseTraceText(text);
    for (const size of [1, 7, 4096, 70_000]) {
      const acc = createTraceAccumulator();
      for (let i = 0; i < text.length; i += size) acc.pushText(text.slice(i, i + size));
      const t = acc.finish();
      expect(t.samples).toBe(whole.samples);
      expect(t.sampleRateHz).toBe(whole.sampleRateHz);
      expect(values(t)).toEqual(values(whole));
    }
    expect(whole.samples).toBe(5004);
  });
});
