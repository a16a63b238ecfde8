import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { parseTraceFile } from "../../../server/traces/parse-file";
import { parseTraceText } from "../../../shared/trace/parse";
import { TraceParseError, type ParsedTrace } from "../../../shared/trace/types";
import { createRng } from "./helpers";

let dir: string;
beforeAll(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-trace-file-"));
});
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

function expectSame(a: ParsedTrace, b: ParsedTrace) {
  expect(a.samples).toBe(b.samples);
  expect(a.sampleRateHz).toBe(b.sampleRateHz);
  expect(a.t0).toBe(b.t0);
  expect(a.durationS).toBe(b.durationS);
  expect(a.warnings).toEqual(b.warnings);
  expect(a.time == null).toBe(b.time == null);
  if (a.time && b.time)
    expect(
      Buffer.from(a.time.buffer, a.time.byteOffset, a.time.byteLength).equals(
        Buffer.from(b.time.buffer, b.time.byteOffset, b.time.byteLength),
      ),
    ).toBe(true);
  expect(a.channels.map((c) => [c.name, c.unit, c.min, c.max])).toEqual(
    b.channels.map((c) => [c.name, c.unit, c.min, c.max]),
  );
  a.channels.forEach((c, i) => {
    const d = b.channels[i].values;
    expect(
      Buffer.from(c.values.buffer, c.values.byteOffset, c.values.byteLength).equals(
        Buffer.from(d.buffer, d.byteOffset, d.byteLength),
      ),
    ).toBe(true);
  });
}

/** A few MB of export: metadata, `;` and decimal comma, time in µs, CRLF, or comma with uneven time. */
function generate(seed: number, rows: number, style: "semicolon" | "comma-uneven"): string {
  const rng = createRng(seed);
  const out: string[] = [];
  if (style === "semicolon") {
    out.push("Model;XYZ-4", "# capture export", "", "Time (\u00b5s);Channel A (V);Channel B (V)");
    for (let i = 0; i < rows; i++) {
      const a = (12 * Math.sin(i / 300) + rng.normal()).toFixed(4).replace(".", ",");
      const b = (rng.normal() * 1e-3).toExponential(3).replace(".", ",");
      out.push(`${(i * 0.5).toFixed(1).replace(".", ",")};${a};${b}`);
    }
    return out.join("\r\n") + "\r\n";
  }
  out.push("Time (ms),Channel A (V)");
  let t = 0;
  for (let i = 0; i < rows; i++) {
    t += 0.001 * (0.5 + rng.next());
    out.push(`${t.toPrecision(12)},${rng.normal().toFixed(5)}`);
  }
  out.push("1.5"); // a cut-short last line: skipped with a warning
  return out.join("\n");
}

describe("parseTraceFile (streamed from disk)", () => {
  it("a streamed parse of a multi-MB file equals parseTraceText on the same text", async () => {
    for (const [style, chunk] of [
      ["semicolon", 65_537],
      ["comma-uneven", undefined],
    ] as const) {
      const text = generate(5, 120_000, style);
      const file = path.join(dir, `${style}.csv`);
      fs.writeFileSync(file, text);
      expect(fs.statSync(file).size).toBeGreaterThan(2_000_000);
      const streamed = await parseTraceFile(file, { chunkBytes: chunk });
      const whole = parseTraceText(text);
      expectSame(streamed, whole);
      expect(streamed.samples).toBe(120_000);
      if (style === "semicolon") {
        // 0.5 µs apart → 2 MHz (micro = 1e-6, BIPM SI Brochure Table 7)
        expect(streamed.sampleRateHz).toBe(2e6);
        expect(streamed.time).toBeNull();
      } else {
        expect(streamed.time).not.toBeNull();
        expect(streamed.warnings.join(" ")).toMatch(/line 120002/);
      }
    }
  });

  it("decodes a multi-byte character split across chunks", async () => {
    const file = path.join(dir, "mu.csv");
    const text = "Time (\u00b5s),Channel A (V)\n0,1\n1,2\n2,3\n";
    fs.writeFileSync(file, text);
    // "µ" is two bytes in UTF-8 (RFC 3629); 7-byte chunks split it
    const t = await parseTraceFile(file, { chunkBytes: 7 });
    expect(t.sampleRateHz).toBe(1e6);
    expectSame(t, parseTraceText(text));
  });

  it("refuses a file over the size limit before reading it", async () => {
    const file = path.join(dir, "big.csv");
    fs.writeFileSync(file, "Time,A\n0,1\n1,2\n");
    await expect(parseTraceFile(file, { maxBytes: 10 })).rejects.toMatchObject({ code: "too-large", line: null });
    await expect(parseTraceFile(file, { maxBytes: 10 })).rejects.toBeInstanceOf(TraceParseError);
  });

  it("refusals from the streamed parse carry the same code and line", async () => {
    const file = path.join(dir, "bad.csv");
    const rows = Array.from({ length: 50_000 }, (_, i) => `${i},${i}`);
    rows[40_000] = "40000,volts"; // line 40002
    fs.writeFileSync(file, `Time,A\n${rows.join("\n")}\n`);
    await expect(parseTraceFile(file, { chunkBytes: 4096 })).rejects.toMatchObject({
      code: "text-in-numeric-column",
      line: 40_002,
    });
    fs.writeFileSync(file, "");
    await expect(parseTraceFile(file)).rejects.toMatchObject({ code: "empty-file" });
  });

  it("yields to the event loop between chunks", async () => {
    const file = path.join(dir, "yield.csv");
    fs.writeFileSync(file, generate(9, 20_000, "semicolon"));
    let ticks = 0;
    let done = false;
    const tick = () => {
      ticks++;
      if (!done) setImmediate(tick);
    };
    setImmediate(tick);
    const parse = parseTraceFile(file, { chunkBytes: 16 * 1024 });
    await parse.finally(() => (done = true));
    const chunks = Math.ceil(fs.statSync(file).size / (16 * 1024));
    // other work ran between (nearly) every pair of chunks
    expect(ticks).toBeGreaterThanOrEqual(chunks - 1);
  });

  it("stops when aborted", async () => {
    const file = path.join(dir, "abort.csv");
    fs.writeFileSync(file, generate(3, 5000, "semicolon"));
    const ctl = new AbortController();
    ctl.abort(new Error("upload cancelled"));
    await expect(parseTraceFile(file, { signal: ctl.signal })).rejects.toThrow("upload cancelled");
  });
});
