/**
 * The layouts instruments write (docs/api.md, "CSV forms the importer reads"), each built here from
 * a signal whose truth is set by its parameters: a sine of known amplitude and frequency sampled at a
 * known interval, printed as the layout prints it. Expected values come from those parameters and
 * from definitions, never from the reader:
 * - sample rate = 1 / sample interval (definition);
 * - SI prefixes milli 1e-3, micro 1e-6, nano 1e-9 (BIPM, SI Brochure, 9th ed., 2019, Table 7);
 * - decimal comma (ISO 80000-1:2009 §7.3.2);
 * - a value from an ADC code = code × the stated size of one code (definition of a scale factor);
 * - values are kept as single-precision floats (IEEE 754 binary32): expected values pass through
 *   Math.fround.
 */
import { describe, expect, it } from "vitest";
import { parseTraceText } from "../../../shared/trace/parse";
import { TraceParseError, type ParsedTrace } from "../../../shared/trace/types";

/** n samples of a sine (amplitude a, frequency f) at interval dt, printed with 6 significant digits. */
function sine(n: number, a: number, f: number, dt: number): number[] {
  return Array.from({ length: n }, (_, k) => Number((a * Math.sin(2 * Math.PI * f * k * dt)).toPrecision(6)));
}
const f32 = (xs: number[]) => xs.map((x) => Math.fround(x));
const values = (t: ParsedTrace, c = 0) => Array.from(t.channels[c].values);
const relErr = (a: number, b: number) => Math.abs(a / b - 1);

function refusal(fn: () => unknown): TraceParseError {
  try {
    fn();
  } catch (e) {
    expect(e).toBeInstanceOf(TraceParseError);
    return e as TraceParseError;
  }
  throw new Error("expected a TraceParseError");
}

describe("metadata in columns beside the data", () => {
  // 2 V, 50 Hz sine at 1e-4 s per sample (10 kS/s by definition); key/value pairs in columns 1–2,
  // column 3 empty, time in column 4 and the value in column 5, on every row; no header row
  const dt = 1e-4;
  const v = sine(300, 2, 50, dt);
  const keys = [
    ["Record Length", "3.00E+02"],
    ["Sample Interval", "1.00E-04"],
    ["Trigger Point", "0"],
    ["", ""],
    ["Source", "CH2"],
    ["Vertical Units", "V"],
    ["Vertical Scale", "5.00E-01"],
  ];
  const text = v
    .map((x, k) => `${keys[k]?.[0] ?? ""},${keys[k]?.[1] ?? ""},,${(k * dt - 0.01).toPrecision(6)},${x}`)
    .join("\r\n");

  it("reads the values, the time column and the rate, the channel's name and unit from the keys", () => {
    const t = parseTraceText(text);
    expect(t.samples).toBe(300);
    expect(relErr(t.sampleRateHz, 1 / dt)).toBeLessThan(1e-9); // 1 / 1e-4 s = 10 kHz
    expect(t.t0).toBeCloseTo(-0.01, 12); // first printed time
    expect(t.channels).toHaveLength(1);
    expect(t.channels[0]).toMatchObject({ name: "CH2", unit: "V", unitFrom: "metadata" });
    expect(values(t)).toEqual(f32(v));
  });
});

describe("sample-number columns with the interval in the header", () => {
  it("`X,CH1,CH2,Start,Increment` over a units row holding the start and the increment", () => {
    // 2 ns per sample (500 MS/s by definition), first sample at −10.6 µs
    const a = sine(40, 0.8, 5e6, 2e-9);
    const b = a.map((x) => String(-2 * x));
    const text = [
      "X,CH1,CH2,Start,Increment,",
      "Sequence,Volt,Volt,-1.060000e-05,2.000000e-09",
      ...a.map((x, k) => `${k},${x},${b[k]},`),
    ].join("\n");
    const t = parseTraceText(text);
    expect(t.samples).toBe(40);
    expect(relErr(t.sampleRateHz, 5e8)).toBeLessThan(1e-9);
    expect(t.t0).toBeCloseTo(-1.06e-5, 15);
    // names from the names row, units from the units row ("Volt" is the volt, normalised to V)
    expect(t.channels.map((c) => [c.name, c.unit])).toEqual([
      ["CH1", "V"],
      ["CH2", "V"],
    ]);
    expect(t.channels[0].unitWritten).toBe("Volt");
    expect(values(t, 1)).toEqual(f32(b.map(Number)));
    expect(t.warnings.join(" ")).toMatch(/column 1 \("X"\) was read as a sample number/);
  });

  it("`index,CH1_Voltage(mV)` after `Time interval :,0.08uS`", () => {
    // 0.08 µs = 8e-8 s per sample → 12.5 MS/s (micro = 1e-6)
    const v = sine(50, 1500, 1e5, 8e-8);
    const text = [
      "Channel\t\t  :,CH1",
      "Probe attenuation\t  :,10X",
      "Time interval\t\t  :,0.08uS",
      "",
      "index,CH1_Voltage(mV)",
      ...v.map((x, k) => `${k},${x.toFixed(2)}`),
    ].join("\r\n");
    const t = parseTraceText(text);
    expect(relErr(t.sampleRateHz, 12.5e6)).toBeLessThan(1e-9);
    expect(t.channels[0]).toMatchObject({ unit: "mV" });
    expect(values(t)).toEqual(f32(v.map((x) => Number(x.toFixed(2)))));
  });

  it("a sample number with no interval anywhere is refused, saying what is missing", () => {
    const e = refusal(() =>
      parseTraceText(
        `index,CH1 (V)\n${sine(30, 1, 10, 1e-3)
          .map((x, k) => `${k},${x}`)
          .join("\n")}\n`,
      ),
    );
    expect(e.code).toBe("no-sample-rate");
    expect(e.message).toMatch(
      /numbers its samples but has no time column, and no line states the sample interval or rate/,
    );
    expect(e.message).toMatch(/enter the sample rate/);
  });
});

describe("names and units", () => {
  it("time and channels named by their unit: `in s,C1 in V,C2 in mV`", () => {
    const dt = 1.2e-4;
    const v = sine(30, 3, 100, dt);
    const text = ["in s,C1 in V,C2 in mV", ...v.map((x, k) => `${(k * dt).toExponential(5)},${x},${x * 1000}`)].join(
      "\r\n",
    );
    const t = parseTraceText(text);
    expect(relErr(t.sampleRateHz, 1 / dt)).toBeLessThan(1e-9);
    expect(t.channels.map((c) => [c.name, c.unit])).toEqual([
      ["C1", "V"],
      ["C2", "mV"],
    ]);
  });

  it("quantity / unit headers (DIN 1313, ISO 80000-1), one-letter units too: `t / s;U / V;I / A`", () => {
    const dt = 5e-4;
    const v = sine(30, 3, 100, dt);
    // semicolons and decimal commas (ISO 80000-1:2009 §7.3.2)
    const comma = (x: number) => String(x).replace(".", ",");
    const rows = v.map((x, k) => [comma(k * dt), comma(x), comma(x * 100), "1"].join(";"));
    const t = parseTraceText(["t / s;U / V;I / A;P / kW", ...rows].join("\n"));
    expect(relErr(t.sampleRateHz, 1 / dt)).toBeLessThan(1e-9);
    expect(t.channels.map((c) => [c.name, c.unit])).toEqual([
      ["U", "V"],
      ["I", "A"],
      ["P", "kW"],
    ]);
    // a tab file in µs with a channel named A in volts
    const tsv = ["t / us\tA / V", ...v.map((x, k) => `${(k * dt * 1e6).toFixed(1)}\t${x}`)].join("\n");
    expect(parseTraceText(tsv).channels.map((c) => [c.name, c.unit])).toEqual([["A", "V"]]);
    // without blanks round the slash a one-letter tail is part of the name
    const plain = ["Time (s),Ch A/B", ...v.map((x, k) => `${k * dt},${x}`)].join("\n");
    expect(parseTraceText(plain).channels.map((c) => [c.name, c.unit])).toEqual([["Ch A/B", null]]);
  });

  it("a units row of words names no channel: names come from the row above", () => {
    const dt = 1e-6;
    const v = sine(30, 0.5, 1e4, dt);
    const text = [
      "x-axis,1,2",
      "second,Volt,Ampere",
      ...v.map((x, k) => `${(k * dt - 1e-5).toExponential(6)},${x},${-x}`),
    ].join("\n");
    const t = parseTraceText(text);
    expect(t.channels.map((c) => [c.name, c.unit])).toEqual([
      ["1", "V"],
      ["2", "A"],
    ]);
    expect(relErr(t.sampleRateHz, 1e6)).toBeLessThan(1e-9);
  });

  it("one name and unit per column given as key rows, the data after an empty first column", () => {
    // `TraceName,CH1,CH2` and `VUnit,V,A` give each column's name and unit; `HResolution` the interval
    const v = sine(30, 2, 1e3, 1e-5);
    const text = [
      "Model,bench",
      "TraceName,CH1,CH2",
      "VUnit,V,A",
      "HResolution,1.0E-05,1.0E-05",
      "HOffset,0,0",
      ...v.map((x) => `,${x},${x / 10}`),
    ].join("\n");
    const t = parseTraceText(text);
    expect(t.samples).toBe(30); // the `HOffset,0,0` row is a key, not a sample
    expect(relErr(t.sampleRateHz, 1e5)).toBeLessThan(1e-9); // 1 / 1e-5 s
    expect(t.channels.map((c) => [c.name, c.unit])).toEqual([
      ["CH1", "V"],
      ["CH2", "A"],
    ]);
  });

  it("a logger header of NAME= lines over blank-separated columns", () => {
    // 100 S/s stated as a rate; the first column rises by 1 / 100 s, so it is the time column
    const v = sine(40, 12, 2, 0.01);
    const text = [
      "NAME=bench logger",
      "SAMPLE_RATE=100",
      "NAME=Time",
      "NAME=Battery",
      "UNIT=s",
      "UNIT=V",
      ...v.map((x, k) => `  ${(k * 0.01).toFixed(2)}    ${x}`),
    ].join("\n");
    const t = parseTraceText(text);
    expect(t.sampleRateHz).toBe(100);
    expect(t.channels.map((c) => [c.name, c.unit])).toEqual([["Battery", "V"]]);
    expect(values(t)).toEqual(f32(v));
  });

  it("blank-separated columns with `Name (unit)` headers", () => {
    const v = sine(30, 1, 50, 1e-3);
    const text = ["Time (ms)   Supply (V)   Current (A)", ...v.map((x, k) => `${k}   ${x}   ${x * 2}`)].join("\n");
    const t = parseTraceText(text);
    expect(t.sampleRateHz).toBe(1000); // 1 ms per sample (milli = 1e-3)
    expect(t.channels.map((c) => [c.name, c.unit])).toEqual([
      ["Supply", "V"],
      ["Current", "A"],
    ]);
  });

  it("semicolons and decimal commas after `;` comment lines, channels in different units", () => {
    const v = sine(30, 4, 25, 4e-5);
    const dec = (x: number) => String(x).replace(".", ",");
    const text = [
      ";Device;handheld",
      ";Sample rate;25000",
      "Time;Channel A;Channel B",
      "(ms);(V);(mV)",
      "",
      ...v.map((x, k) => `${dec(Number((k * 0.04).toFixed(2)))};${dec(x)};${dec(x * 1000)}`),
    ].join("\n");
    const t = parseTraceText(text);
    expect(relErr(t.sampleRateHz, 25_000)).toBeLessThan(1e-9); // 0,04 ms per sample
    expect(t.channels.map((c) => [c.name, c.unit])).toEqual([
      ["Channel A", "V"],
      ["Channel B", "mV"],
    ]);
    expect(values(t)).toEqual(f32(v));
  });
});

describe("the sample interval as headers write it", () => {
  it.each([
    // interval in seconds unless a unit follows (SI prefixes, BIPM Table 7); rate = 1 / interval
    ["#CLOCK=4.0000E-09", 2.5e8],
    ["TIME_INTERVAL=0.001", 1000],
    ["SAMPLE_RATE=1000", 1000],
    ["DX=2e-6", 5e5],
    ["Sampling Period,4.000E-06", 2.5e5],
    ["Time interval\t\t  :,0.08uS", 1.25e7],
    ["Sample Interval,Analog:1.00E-06", 1e6],
  ])("%s → %d S/s", async (line, rate) => {
    const { sampleRateFromMetadata } = await import("../../../shared/trace/parse");
    expect(relErr(sampleRateFromMetadata(line)!, rate)).toBeLessThan(1e-9);
  });

  it("a clock time or a clock frequency is not a sample interval", async () => {
    const { sampleRateFromMetadata } = await import("../../../shared/trace/parse");
    expect(sampleRateFromMetadata("Clock: 12:30:00")).toBeUndefined();
    expect(sampleRateFromMetadata("CLOCK=48MHz")).toBeUndefined();
    expect(sampleRateFromMetadata("Sample time: 2022-06-06 18:43")).toBeUndefined();
  });
});

describe("values and time as loggers and scopes write them", () => {
  it("whole numbers with a stated size per ADC code are multiplied by it", () => {
    const codes = Array.from({ length: 40 }, (_, k) => Math.round(50 * Math.sin(k / 4)));
    const text = ["Sample interval: 1us", "Voltage per ADC value: 40mV", "Waveform Data", ...codes.map(String)].join(
      "\n",
    );
    const t = parseTraceText(text);
    expect(t.sampleRateHz).toBe(1e6);
    expect(t.channels[0].unit).toBe("mV");
    expect(values(t)).toEqual(f32(codes.map((c) => c * 40))); // code × 40 mV
    expect(t.channels[0].scaledFrom).toMatch(/ADC codes × 40 mV per code \(line 2\)/);
  });

  it("whole numbers far beyond a stated screen are kept as codes and say so", () => {
    // 0.2 V/div: a screen of about ten divisions holds ±1 V; codes up to 120 cannot be volts
    const codes = Array.from({ length: 40 }, (_, k) => Math.round(120 * Math.sin(k / 5)));
    const text = [
      "Vertical Units,V,",
      "Vertical Scale,2.000E-01,",
      "Sampling Period,4.000E-06,",
      "Waveform Data,",
      ...codes.map((c) => `${c},`),
    ].join("\n");
    const t = parseTraceText(text);
    expect(t.sampleRateHz).toBe(250_000); // 1 / 4e-6 s
    expect(t.channels[0].unit).toBe("counts");
    expect(values(t)).toEqual(codes);
    expect(t.warnings.join(" ")).toMatch(/raw ADC codes/);
  });

  it("an over-range sample written as infinity takes the channel's extreme", () => {
    const v = sine(40, 5, 1000, 2.5e-5);
    const printed = v.map(String);
    printed[10] = "∞";
    printed[30] = "-∞";
    const text = ["Time,Channel A", "(us),(V)", ...printed.map((x, k) => `${k * 25},${x}`)].join("\n");
    const t = parseTraceText(text);
    const rest = v.filter((_, k) => k !== 10 && k !== 30);
    expect(t.channels[0].values[10]).toBe(Math.fround(Math.max(...rest)));
    expect(t.channels[0].values[30]).toBe(Math.fround(Math.min(...rest)));
    expect(t.warnings.join(" ")).toMatch(/2 samples of Channel A were written as infinity/);
  });

  it("a few samples written as NaN are filled in from their neighbours, the lines named", () => {
    const dt = 1e-5;
    const v = sine(500, 2, 1000, dt);
    const at = [0, 99, 250, 251];
    const rows = v.map((x, k) => `${(k * dt).toExponential(6)},${at.includes(k) ? (k === 99 ? "-nan" : "NaN") : x}`);
    const t = parseTraceText(["Time (s),A (V),B (V)", ...rows.map((r, k) => `${r},${k === 3 ? "NaN" : 1}`)].join("\n"));
    // the header is still the header with NaN in the first data row (line 2)
    expect(t.channels.map((c) => [c.name, c.unit])).toEqual([
      ["A", "V"],
      ["B", "V"],
    ]);
    expect(t.samples).toBe(500);
    const a = t.channels[0].values;
    // a straight line between the samples beside the gap (definition of linear interpolation); the
    // first sample takes the next one's value
    expect(a[0]).toBe(Math.fround(v[1]));
    expect(a[99]).toBeCloseTo((v[98] + v[100]) / 2, 5);
    expect(a[250]).toBeCloseTo(v[249] + (v[252] - v[249]) / 3, 5);
    expect(a[251]).toBeCloseTo(v[249] + (2 * (v[252] - v[249])) / 3, 5);
    expect(t.channels[1].values[3]).toBe(1);
    // lines: the header is line 1, sample k on line k + 2
    expect(t.warnings.join(" ")).toMatch(/4 samples of A were written as NaN \(missing\): lines 2, 101, 252, 253/);
    expect(t.warnings.join(" ")).toMatch(/1 sample of B was written as NaN \(missing\): line 5/);
  });

  it("more NaN cells than can be filled is a refusal naming the column and lines; an all-NaN channel is left out", () => {
    const dt = 1e-5;
    const v = sine(200, 2, 1000, dt);
    const many = v.map((x, k) => `${k * dt},${k % 10 === 0 ? "NaN" : x}`);
    const e = refusal(() => parseTraceText(["Time (s),A (V)", ...many].join("\n")));
    expect(e.message).toMatch(/"A" has 20 cells written as NaN/);
    expect(e.message).toMatch(/lines 2, 12, 22/);
    expect(e.line).toBe(2);
    const off = v.map((x, k) => `${k * dt},${x},NaN`);
    const t = parseTraceText(["Time (s),A (V),C (V)", ...off].join("\n"));
    expect(t.channels.map((c) => c.name)).toEqual(["A"]);
    expect(t.warnings.join(" ")).toMatch(/C holds no samples \(every cell NaN\) and was left out/);
  });

  it("date and time stamps in the time column, counted from the first one", () => {
    // one sample every 0.5 s across midnight
    const start = Date.UTC(2023, 11, 31, 23, 59, 50);
    const stamp = (ms: number) => new Date(ms).toISOString().replace("T", " ").replace("Z", "").replace(/-/g, "/");
    const text = [
      "Date Time,Pressure (kPa)",
      ...Array.from({ length: 40 }, (_, k) => `${stamp(start + k * 500)},${100 + k}`),
    ].join("\n");
    const t = parseTraceText(text);
    expect(t.sampleRateHz).toBe(2); // 1 / 0.5 s
    expect(t.t0).toBe(0);
    expect(t.channels[0]).toMatchObject({ name: "Pressure", unit: "kPa" });
  });

  it("a time column without a unit, 1000 times the interval a metadata line states, is in ms", () => {
    const text = [
      "Sample interval: 1e-6 s",
      "Time,A",
      ...Array.from({ length: 30 }, (_, k) => `${(k * 0.001).toFixed(3)},${k}`),
    ].join("\n");
    const t = parseTraceText(text);
    expect(t.sampleRateHz).toBe(1e6);
    expect(t.warnings.join(" ")).toMatch(/read in ms/);
  });
});

describe("rows with missing or extra columns", () => {
  it("are reported with their count and first lines wherever they are, even before the first full row", () => {
    const rows = Array.from({ length: 200 }, (_, k) => `${k * 1e-3},${k % 5}`);
    rows[0] = "0,1,9"; // line 2 (header = line 1)
    rows[100] = "0.1"; // line 102
    const t = parseTraceText(`Time (s),A\n${rows.join("\n")}\n`);
    expect(t.samples).toBe(198);
    expect(t.droppedRows).toEqual({ count: 2, lines: [2, 102] });
    expect(t.warnings.join(" ")).toMatch(/skipped 2 rows with missing or extra columns: lines 2, 102/);
    expect(t.channels[0].name).toBe("A");
  });

  it("a clean file reports none", () => {
    expect(parseTraceText("Time (s),A\n0,1\n1,2\n").droppedRows ?? null).toBeNull();
  });
});
