import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import Papa from "papaparse";
import {
  createTraceAccumulator,
  detectDelimiter,
  MAX_FLOAT32,
  MAX_TRACE_FILE_BYTES,
  MAX_TRACE_SAMPLES,
  parseColumnHeader,
  parseTraceText,
  sampleRateFromMetadata,
} from "../../../shared/trace/parse";
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
    const text =
      "Model,XYZ\nSerial,12\n# comment, with a comma\nSample interval: 1e-6\n\nTime (us),Channel A (V),B (V)\n0,1,2\n1,2,3\n2,3,4\n";
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
  // Product rule (issue 3, "Parsing"): refused with a clear message naming the line and the reason —
  // empty file, no numeric rows, text in a numeric column, time not increasing, ragged rows beyond
  // a small tolerance, over the size limits; 1–8 value columns; no time column → the stated rate.
  // The fixtures' expected outcomes are hand-written in tests/fixtures/traces/README.md.

  it("refuses an empty file", () => {
    // Product rule (issue 3): an empty file is refused; no line to name (line null).
    expect(refusal(() => parseTraceText(fixture("refuse-empty.csv")))).toMatchObject({
      code: "empty-file",
      line: null,
    });
    // blank lines only count as empty too (product rule, issue 3)
    expect(refusal(() => parseTraceText("\n \n\n")).code).toBe("empty-file");
  });

  it("refuses a file with no rows of numbers", () => {
    // Product rule (issue 3): no numeric rows; a header alone has none.
    expect(refusal(() => parseTraceText(fixture("refuse-no-numeric-rows.csv")))).toMatchObject({
      code: "no-numeric-rows",
    });
    expect(refusal(() => parseTraceText("Time (s),Channel A (V)\n")).code).toBe("no-numeric-rows");
  });

  it("refuses text in a numeric column, naming the line and the column", () => {
    // Product rule (issue 3); fixture README: refuse-text-in-column.csv has "spark" on line 4, column 2.
    const e = refusal(() => parseTraceText(fixture("refuse-text-in-column.csv")));
    expect(e.code).toBe("text-in-numeric-column");
    expect(e.line).toBe(4);
    expect(e.message).toMatch(/^line 4: column 2 \("Channel A"\) has "spark", which is not a number/);
  });

  it("refuses text in the time column and text far into the data", () => {
    // Product rule (issue 3). Line numbers by counting: header = line 1, rows[60] = line 62.
    const rows = Array.from({ length: 100 }, (_, i) => `${i},${i}`);
    rows[60] = "sixty,60"; // line 62
    const e = refusal(() => parseTraceText(`Time,A\n${rows.join("\n")}\n`));
    expect(e).toMatchObject({ code: "text-in-numeric-column", line: 62 });
    expect(e.message).toMatch(/time column/);
  });

  it("refuses text in the second data row (not mistaken for a header)", () => {
    // Product rule (issue 3): "1,x" on line 3 (by counting) is data with text in it, not a header.
    const e = refusal(() =>
      parseTraceText(`Time,A\n0,1\n1,x\n${Array.from({ length: 30 }, (_, i) => `${i + 2},${i}`).join("\n")}`),
    );
    expect(e).toMatchObject({ code: "text-in-numeric-column", line: 3 });
  });

  it("refuses hexadecimal, binary and octal values, which `+s` would read (ECMA-262 NonDecimalIntegerLiteral)", () => {
    // ECMA-262 StringNumericLiteral: Number("0x1A") is 26, Number("0b101") 5, Number("0o17") 15 —
    // shown here so the reason for the check is visible; an export writes decimal numbers
    // (product rule, issue 3: "text in a numeric column" is refused).
    expect([Number("0x1A"), Number("0b101"), Number("0o17")]).toEqual([26, 5, 15]);
    for (const v of ["0x1A", "0X1a", "0b101", "0o17", " 0x1A"]) {
      const e = refusal(() => parseTraceText(`Time,A\n0,1\n1,${v}\n2,3\n`));
      expect(e, v).toMatchObject({ code: "text-in-numeric-column", line: 3 });
      expect(e.message).toMatch(
        /^line 3: column 2 \("A"\) has "0[xXbo]1[0-9Aa]*", which is not a number in decimal notation/,
      );
    }
    // hexadecimal in the time column is refused the same way (line 3 by counting)
    expect(refusal(() => parseTraceText("Time,A\n0,1\n0x2,2\n"))).toMatchObject({
      code: "text-in-numeric-column",
      line: 3,
    });
    // decimal numbers that start with 0 are still read: "0e5" = 0, "0.5", "05" = 5 (ECMA-262 StrDecimalLiteral)
    expect(values(parseTraceText("Time,A\n0,0e5\n1,0.5\n2,05\n"))).toEqual([0, 0.5, 5]);
  });

  it("refuses values beyond single precision (±3.4e38) instead of storing Infinity, naming line and column", () => {
    // IEEE 754 binary32: the largest finite value is (2 − 2⁻²³)·2¹²⁷ ≈ 3.4028235e38; a larger number
    // stored in a Float32Array becomes Infinity (ECMA-262 NumericToRawBytes, round to nearest).
    expect(new Float32Array([1e39])[0]).toBe(Infinity);
    expect((2 - 2 ** -23) * 2 ** 127).toBe(MAX_FLOAT32);
    for (const v of ["1e39", "-1e39", "3.5e38", "1e400"]) {
      const e = refusal(() => parseTraceText(`Time,A\n0,1\n1,${v}\n2,3\n`));
      expect(e, v).toMatchObject({ code: "value-out-of-range", line: 3 });
      expect(e.message).toMatch(/^line 3: column 2 \("A"\) has "-?[\d.e]+", which is beyond .*3\.4e38/);
    }
    // 3.4e38 itself is within range (below (2 − 2⁻²³)·2¹²⁷): kept, rounded to single precision
    expect(values(parseTraceText("Time,A\n0,1\n1,3.4e38\n"))).toEqual(f32([1, 3.4e38]));
    // a time beyond double precision (1e400 → Infinity, IEEE 754 binary64) is refused too
    expect(refusal(() => parseTraceText("Time,A\n0,1\n1e400,2\n"))).toMatchObject({
      code: "value-out-of-range",
      line: 3,
    });
  });

  it("refuses more samples than a trace may have, with code too-large and the line", () => {
    // Product rule (issue 3: "over the size limits"; review finding: 200 MB of "1\n" is ~100 M samples).
    // 200 MiB (issue 3's upload limit) of "1\n" is 104,857,600 rows by arithmetic (2 bytes each).
    expect(MAX_TRACE_FILE_BYTES / 2).toBe(104_857_600);
    expect(MAX_TRACE_SAMPLES).toBe(50_000_000);
    expect(MAX_TRACE_SAMPLES).toBeLessThan(MAX_TRACE_FILE_BYTES / 2);
    // the same check with a small limit: 100 samples accepted, the 101st (line 102, header = line 1) refused
    const ones = (k: number) => `A\n${Array.from({ length: k }, () => "1").join("\n")}\n`;
    expect(parseTraceText(ones(100), { sampleRateHz: 1000, maxSamples: 100 }).samples).toBe(100);
    const e = refusal(() => parseTraceText(ones(101), { sampleRateHz: 1000, maxSamples: 100 }));
    expect(e).toMatchObject({ code: "too-large", line: 102 });
    expect(e.message).toMatch(/more than 100 samples/);
    // the limit holds whatever the chunking (pushText in 7-character chunks)
    const acc = createTraceAccumulator({ sampleRateHz: 1000, maxSamples: 5000 });
    const text = ones(6000);
    expect(() => {
      for (let i = 0; i < text.length; i += 7) acc.pushText(text.slice(i, i + 7));
      acc.finish();
    }).toThrow(/more than 5,000 samples/);
  });

  it("refuses time that does not increase, naming the line", () => {
    // Product rule (issue 3); fixture README: refuse-time-not-increasing.csv, line 5.
    const e = refusal(() => parseTraceText(fixture("refuse-time-not-increasing.csv")));
    expect(e).toMatchObject({ code: "time-not-increasing", line: 5 });
    // 0, 2, 1: the third data row (line 4 by counting) goes back in time
    expect(refusal(() => parseTraceText("Time,A\n0,1\n2,2\n1,3\n"))).toMatchObject({
      code: "time-not-increasing",
      line: 4,
    });
  });

  it("refuses ragged rows beyond the tolerance (more than 10 rows and more than 0.1 %)", () => {
    // Product rule (issue 3: "ragged rows beyond a small tolerance"); the tolerance — 10 rows or
    // 0.1 % of the rows, whichever is more — is the project's choice (shared/trace/parse.ts).
    const rows = Array.from({ length: 1000 }, (_, i) => `${i},${i}`);
    for (let k = 0; k < 11; k++) rows[100 + k * 10] = `${100 + k * 10},1,2`; // lines 102, 112, …
    const e = refusal(() => parseTraceText(`Time,A\n${rows.join("\n")}\n`));
    expect(e).toMatchObject({ code: "ragged-rows", line: 102 });
    expect(e.message).toMatch(/11 rows have missing or extra columns \(expected 2; line 102 has 3 columns\)/);
    // ten are still tolerated: 1000 rows − 10 skipped = 990 samples (arithmetic)
    rows[200] = "200,200";
    expect(parseTraceText(`Time,A\n${rows.join("\n")}\n`).samples).toBe(990);
  });

  it("tolerates up to 0.1 % ragged rows in a long file", () => {
    // Project's tolerance (see above): 0.1 % of 20,000 rows = 20 rows; 20,000 − 20 = 19,980 samples.
    const rows = Array.from({ length: 20_000 }, (_, i) => `${i},${i}`);
    for (let k = 0; k < 20; k++) rows[1000 * k + 5] = "1";
    const t = parseTraceText(`Time,A\n${rows.join("\n")}\n`);
    expect(t.samples).toBe(19_980);
    rows[6] = "1"; // 21 > 0.1 % of 20,000
    expect(refusal(() => parseTraceText(`Time,A\n${rows.join("\n")}\n`)).code).toBe("ragged-rows");
  });

  it("refuses more than 8 value columns", () => {
    // Product rule (issue 3: "1–8 value columns"); fixture README: refuse-too-many-columns.csv has 9.
    expect(refusal(() => parseTraceText(fixture("refuse-too-many-columns.csv")))).toMatchObject({
      code: "too-many-columns",
      line: 1,
    });
  });

  it("refuses a file with no time column and no sample rate, saying what to do", () => {
    // Product rule (issue 3: "a file with no time column uses the stated sample rate").
    const e = refusal(() => parseTraceText(fixture("no-time-column.csv")));
    expect(e).toMatchObject({ code: "no-sample-rate", line: 1 });
    expect(e.message).toMatch(/enter the sample rate/);
  });

  it("refuses a time column with a unit it does not know", () => {
    // Product rule (issue 3: time units (s) (ms) (us) (µs) (ns)); "div" is not a unit of time (BIPM SI Brochure).
    expect(refusal(() => parseTraceText("Time (div),A\n0,1\n1,2\n"))).toMatchObject({
      code: "unknown-time-unit",
      line: 1,
    });
  });

  it("refuses a time column without value columns, and a single sample", () => {
    // Product rule (issue 3: 1–8 value columns); a trace of one sample has no sample interval
    // (sample rate = 1 / interval needs two samples — definition).
    expect(refusal(() => parseTraceText("Time (s)\n0\n1\n2\n")).code).toBe("no-value-columns");
    expect(refusal(() => parseTraceText("Time (s),A\n0,1\n")).code).toBe("too-few-samples");
    // the refusal points at the one data row (line 2), not the header
    expect(refusal(() => parseTraceText("# scope export\nTime (s),A (V)\n0,0.1\n"))).toMatchObject({
      code: "too-few-samples",
      line: 3,
    });
  });
});

describe("sample rate from a metadata line with digit grouping", () => {
  // Digit grouping as locales write it: en-US "1,000,000" and de-DE "1.000.000" (CLDR data, via
  // ECMA-402 Intl.NumberFormat — computed below, not typed in); groups of three separated by a
  // space, "1 000 000" (BIPM SI Brochure, 9th ed., §5.4.4 — section number from memory).
  const enUS = new Intl.NumberFormat("en-US").format(1_000_000);
  const deDE = new Intl.NumberFormat("de-DE").format(1_000_000);

  it("reads grouped numbers as the locale wrote them, never a millionth of the rate", () => {
    expect(enUS).toBe("1,000,000");
    expect(deDE).toBe("1.000.000");
    // 1,000,000 Hz = 1 MHz = 1e6 Hz (SI prefix mega = 1e6, BIPM Table 7)
    expect(sampleRateFromMetadata(`Sample rate: ${enUS} Hz`)).toBe(1e6);
    expect(sampleRateFromMetadata(`Sample rate;${deDE} Hz`)).toBe(1e6);
    expect(sampleRateFromMetadata("Sample rate: 1 000 000 Hz")).toBe(1e6);
    expect(sampleRateFromMetadata("Sample rate: 1\u202f000\u202f000 Hz")).toBe(1e6); // narrow no-break space
    // grouping with a decimal part: en-US "2,500,000.5", de-DE "2.500.000,5" (Intl.NumberFormat)
    const half = 2_500_000.5;
    expect(sampleRateFromMetadata(`Sample rate: ${new Intl.NumberFormat("en-US").format(half)} Hz`)).toBe(half);
    expect(sampleRateFromMetadata(`Sample rate: ${new Intl.NumberFormat("de-DE").format(half)} Hz`)).toBe(half);
  });

  it("refuses an ambiguous number (one separator before three digits) and malformed groups", () => {
    // "1,000" is one thousand in en-US and 1.000 (one) with a decimal comma (ISO 80000-1 §7.3.2 allows
    // the comma as decimal sign): the rate cannot be known, so it is not taken (product rule: never
    // silently a factor of 1000 off).
    expect(new Intl.NumberFormat("en-US").format(1000)).toBe("1,000");
    expect(new Intl.NumberFormat("de-DE", { minimumFractionDigits: 3 }).format(1)).toBe("1,000");
    for (const line of [
      "Sample rate: 1,000 Hz",
      "Sample rate;1.000 Hz",
      "Sample rate: 12,34,567 Hz",
      "Sample rate: 1 5 MHz",
      "Sample rate: 1,0,0 Hz",
    ]) {
      expect(sampleRateFromMetadata(line), line).toBeUndefined();
    }
    // not ambiguous: a decimal comma before fewer or more than three digits, or a leading zero
    // (ISO 80000-1 §7.3.2 decimal sign): 2,5 kS/s = 2500 S/s; 0,001 ms → 1 / 1e-6 s = 1 MHz
    expect(sampleRateFromMetadata("Sample rate: 2,5 kS/s")).toBe(2500);
    expect(sampleRateFromMetadata("Sample interval: 0,001 ms")).toBeCloseTo(1e6, 6);
    // scientific notation uses the separator as the decimal sign: 1.000e6 = 1e6 (ECMA-262 literal grammar)
    expect(sampleRateFromMetadata("Sample rate: 1.000e6 Hz")).toBe(1e6);
  });

  it("a file whose only rate is grouped reads it; an ambiguous one must be stated", () => {
    const data = `Channel A (V)\n${Array.from({ length: 20 }, (_, i) => i).join("\n")}\n`;
    // comma file (the metadata line is split at its commas and joined again): 1e6 Hz
    const comma = parseTraceText(`Sample rate: ${enUS} Hz\n${data}`);
    expect(comma.sampleRateHz).toBe(1e6);
    expect(comma.warnings.join(" ")).toMatch(/line 1: no time column; the sample rate 1000000 Hz was taken/);
    // `;` file with dot grouping: 1e6 Hz
    expect(parseTraceText(`Sample rate;${deDE} Hz\n${data.replace(/\n/g, ";\n")}`).sampleRateHz).toBe(1e6);
    // ambiguous "1,000 Hz": refused as if no rate were stated, naming the line that was not used
    const e = refusal(() => parseTraceText(`Sample rate: 1,000 Hz\n${data}`));
    expect(e).toMatchObject({ code: "no-sample-rate", line: 2 });
    expect(e.message).toMatch(
      /line 1 states a sample rate, "1,000 Hz", but its number could be read more than one way/,
    );
    // … and the stated rate is used (product rule, issue 3)
    expect(parseTraceText(`Sample rate: 1,000 Hz\n${data}`, { sampleRateHz: 1000 }).sampleRateHz).toBe(1000);
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
    const text =
      fixture("semicolon-decimal-comma.csv") +
      Array.from({ length: 5000 }, (_, i) => `${(0.008 + i * 0.002).toFixed(3).replace(".", ",")};${i % 11},5`).join(
        "\n",
      );
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
