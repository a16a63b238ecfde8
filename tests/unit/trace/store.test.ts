import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import {
  forgetTraceData,
  openTraceData,
  openTraceDataCached,
  readChannels,
  writeTraceData,
  TRACE_DATA_MAGIC,
} from "../../../server/traces/store";
import { decimateMinMax } from "../../../shared/trace/decimate";
import type { ParsedTrace } from "../../../shared/trace/types";
import { bruteForceWindow } from "./reference";
import { createRng, randomTrace, randomWindow } from "./helpers";

let dir: string;
beforeAll(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-trace-store-"));
});
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

function expectSameTrace(got: ParsedTrace, want: ParsedTrace) {
  expect(got.samples).toBe(want.samples);
  expect(got.sampleRateHz).toBe(want.sampleRateHz);
  expect(got.t0).toBe(want.t0);
  expect(got.durationS).toBe(want.durationS);
  expect(got.warnings).toEqual(want.warnings);
  if (want.time) expect(Array.from(got.time!)).toEqual(Array.from(want.time));
  else expect(got.time).toBeNull();
  expect(got.channels.map((c) => [c.name, c.unit, c.min, c.max])).toEqual(
    want.channels.map((c) => [c.name, c.unit, c.min, c.max]),
  );
  got.channels.forEach((c, i) =>
    expect(
      Buffer.from(c.values.buffer, c.values.byteOffset, c.values.byteLength).equals(
        Buffer.from(
          want.channels[i].values.buffer,
          want.channels[i].values.byteOffset,
          want.channels[i].values.byteLength,
        ),
      ),
    ).toBe(true),
  );
}

describe("trace data store", () => {
  // Reference for every window below: tests/unit/trace/reference.ts, a brute-force decimation that
  // decides bucket membership by comparing each sample's time with the bucket edges (no code shared
  // with shared/trace/decimate.ts or the store).

  it("round trip: readChannels gives back the input, window equals the brute-force reference", async () => {
    const rng = createRng(31337);
    const sizes = [1, 2, 63, 64, 65, 4095, 4097, 20_000, 70_001];
    for (let s = 0; s < sizes.length * 2; s++) {
      const n = sizes[s % sizes.length];
      const trace = randomTrace(rng, n, rng.int(1, 4), s >= sizes.length);
      trace.warnings = s === 3 ? ["line 9: a note"] : [];
      const { path: file, bytes } = await writeTraceData(dir, `t${s}`, trace);
      expect(fs.statSync(file).size).toBe(bytes);
      // the file starts with its magic
      expect(fs.readFileSync(file).subarray(0, 8).toString("ascii")).toBe(TRACE_DATA_MAGIC);
      expectSameTrace(await readChannels(file), trace);
      const data = await openTraceData(file);
      expect(data.header.samples).toBe(n);
      expect(data.header.uniform).toBe(trace.time == null);
      for (let w = 0; w < 8; w++) {
        const [t0, t1] = w === 0 ? [trace.t0, trace.t0 + trace.durationS] : randomWindow(rng, trace);
        const width = rng.pick([1, 5, 300, 2000, rng.int(1, 4000)]);
        expect(await data.window(t0, t1, width)).toEqual(bruteForceWindow(trace, t0, t1, width));
      }
    }
  });

  it("large traces: sparse block reads at the bucket edges give the brute-force result (uniform and uneven)", async () => {
    const rng = createRng(99);
    for (const uneven of [false, true]) {
      const trace = randomTrace(rng, 800_000, 2, uneven);
      const { path: file } = await writeTraceData(dir, `big-${uneven}`, trace);
      const data = await openTraceData(file);
      const windows: [number, number][] = [
        [trace.t0, trace.t0 + trace.durationS],
        [trace.t0 - trace.durationS * 0.3, trace.t0 + trace.durationS * 0.9],
        [trace.t0 + trace.durationS * 0.1, trace.t0 + trace.durationS * 0.95],
        randomWindow(rng, trace),
      ];
      for (const [t0, t1] of windows) {
        expect(await data.window(t0, t1, 2000)).toEqual(bruteForceWindow(trace, t0, t1, 2000));
      }
    }
  });

  it("refuses a bad id and leaves no file behind when a write fails", async () => {
    const trace = randomTrace(createRng(1), 1000, 2, false);
    await expect(writeTraceData(dir, "../escape", trace)).rejects.toThrow(RangeError);
    const failDir = path.join(dir, "fail");
    // a channel whose data cannot be read part-way through the write
    class Failing extends Float32Array {
      calls = 0;
      override subarray(begin?: number, end?: number): Float32Array<ArrayBuffer> {
        if (++this.calls > 3) throw new Error("disk went away");
        return super.subarray(begin, end);
      }
    }
    const bad = new Failing(300_000);
    const broken: ParsedTrace = { ...trace, samples: bad.length, channels: [{ ...trace.channels[0], values: bad }] };
    await expect(writeTraceData(failDir, "x", broken)).rejects.toThrow("disk went away");
    expect(fs.readdirSync(failDir)).toEqual([]);
  });

  it("the open cache hands back the same opened file until it is forgotten", async () => {
    const trace = randomTrace(createRng(2), 5000, 1, false);
    const { path: file } = await writeTraceData(dir, "cached", trace);
    const a = await openTraceDataCached(file);
    expect(await openTraceDataCached(file)).toBe(a);
    forgetTraceData(file);
    const b = await openTraceDataCached(file);
    expect(b).not.toBe(a);
    expect(await b.window(trace.t0, trace.t0 + trace.durationS, 100)).toEqual(
      bruteForceWindow(trace, trace.t0, trace.t0 + trace.durationS, 100),
    );
  });

  it("worked example at 1 MS/s from the stored file: 10 samples in each 10 µs bucket (uniform and time array)", async () => {
    // By hand (as in decimate.test.ts): sample i at i µs with value i; [100 µs, 200 µs) in 10 buckets
    // → bucket k holds samples 100 + 10k … 109 + 10k. 70,000 samples so the time-array file uses
    // its coarse time index and sparse block reads.
    const n = 70_000;
    const values = Float32Array.from({ length: n }, (_, i) => i);
    const uniform: ParsedTrace = {
      samples: n,
      sampleRateHz: 1e6,
      t0: 0,
      durationS: n / 1e6,
      time: null,
      channels: [{ name: "A", unit: "V", values, min: 0, max: n - 1 }],
      warnings: [],
    };
    const withTime: ParsedTrace = { ...uniform, time: Float64Array.from({ length: n }, (_, i) => i / 1e6) };
    for (const [id, trace] of [
      ["ramp-uniform", uniform],
      ["ramp-time", withTime],
    ] as const) {
      const { path: file } = await writeTraceData(dir, id, trace);
      const data = await openTraceData(file);
      const w = await data.window(100e-6, 200e-6, 10);
      expect(w.series).toEqual([
        {
          name: "A",
          min: [100, 110, 120, 130, 140, 150, 160, 170, 180, 190],
          max: [109, 119, 129, 139, 149, 159, 169, 179, 189, 199],
        },
      ]);
      // [60 ms, 61 ms) in 100 buckets: bucket k holds samples 60,000 + 10k … 60,009 + 10k (by hand)
      const late = await data.window(60e-3, 61e-3, 100);
      expect(late.series[0].min).toEqual(Array.from({ length: 100 }, (_, k) => 60_000 + 10 * k));
      expect(late.series[0].max).toEqual(Array.from({ length: 100 }, (_, k) => 60_009 + 10 * k));
      // and the in-memory decimation gives the same answer as the store
      expect(decimateMinMax(trace, 60e-3, 61e-3, 100)).toEqual(late);
    }
  });

  it("refuses a file that is not trace data", async () => {
    const file = path.join(dir, "not.trace");
    fs.writeFileSync(file, "Time,A\n0,1\n");
    await expect(openTraceData(file)).rejects.toThrow(/not a trace data file/);
  });
});

describe("channel metadata kept with a trace", () => {
  it("the file unit as normalised, where it came from and how values were derived survive the store", async () => {
    // a units row of words ("Volt", the volt) and a stated size per ADC code (definition: value =
    // code × size); what the parser found is what the stored file and the API give back
    const { parseTraceText } = await import("../../../shared/trace/parse");
    const { storedChannels } = await import("../../../server/traces/store");
    const volts = parseTraceText("X,CH1\nSecond,Volt\n0,1\n1e-3,2\n2e-3,3\n");
    const codes = parseTraceText(
      `Sample interval: 1e-6\nVoltage per ADC value: 40mV\nData\n${[1, -2, 3].join("\n")}\n`,
    );
    expect(storedChannels(volts)).toEqual([
      { name: "CH1", unit: "V", min: 1, max: 3, unitWritten: "Volt", unitFrom: "header" },
    ]);
    expect(storedChannels(codes)[0]).toMatchObject({ unit: "mV", unitFrom: "metadata", min: -80, max: 120 });
    const { path: file } = await writeTraceData(dir, "meta-1", codes);
    const back = await readChannels(file);
    expect(back.channels[0]).toMatchObject({
      unit: "mV",
      unitFrom: "metadata",
      scaledFrom: "ADC codes × 40 mV per code (line 2)",
    });
    const opened = await openTraceData(file);
    expect(opened.header.channels[0]).toMatchObject({ name: "A", unit: "mV", unitFrom: "metadata" });
  });
});
