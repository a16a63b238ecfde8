import { spawnSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import { parseTraceText } from "../../../shared/trace/parse";
import { renderCsv } from "../../../demo/generators/csv";
import { generateSecondary } from "../../../demo/generators/secondary";
import { generateStarter } from "../../../demo/generators/starter";

// The CLI is a public contract (issue: command line): the shapes below are what outside tools rely on.
const root = path.resolve(__dirname, "../../..");
let dir: string;
const files: string[] = [];

function cli(args: string[]) {
  // the same command as `npm run -s analyze -- …` (package.json: node --import tsx scripts/analyze.ts)
  return spawnSync(process.execPath, ["--import", "tsx", path.join(root, "scripts/analyze.ts"), ...args], {
    cwd: root,
    encoding: "utf8",
  });
}

beforeAll(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-analyze-"));
  for (let i = 0; i < 4; i++) {
    const g = generateSecondary({
      seed: 90 + i,
      sampleRateHz: 1e6,
      events: 2,
      rpm: 3000,
      fault: i === 1 ? "fouled-plug" : "none",
    });
    const f = path.join(dir, `coil${i + 1}.csv`);
    fs.writeFileSync(f, renderCsv(g.trace, i === 3 ? { delimiter: ";", decimal: ",", valueUnit: "mV" } : {}));
    files.push(f);
  }
  fs.writeFileSync(path.join(dir, "bad.csv"), "Time (s),A (V)\n0,0.01\n0.000001,0.02\n0.000002,n/a\n0.000003,0.01\n");
  const one = generateSecondary({ seed: 99, sampleRateHz: 1e6, events: 1 });
  fs.writeFileSync(path.join(dir, "one.csv"), renderCsv(one.trace));
});

afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

// Signatures from each format's specification (from memory): PNG 89 50 4E 47 0D 0A 1A 0A (PNG spec
// §5.2), ZIP local header "PK\x03\x04" (APPNOTE 4.3.7), gzip 1F 8B (RFC 1952 §2.3.1), PDF "%PDF-"
// (ISO 32000-1 §7.5.2), JPEG FF D8 FF (ITU-T T.81).
describe("npm run analyze refuses a binary file by what it is, as the upload does", () => {
  it.each([
    ["an image", "photo.csv", [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13], /PNG image/],
    ["a JPEG", "scope.csv", [0xff, 0xd8, 0xff, 0xe0, 0, 16], /JPEG image/],
    ["an archive", "export.csv", [0x50, 0x4b, 0x03, 0x04, 20, 0, 0, 0], /ZIP archive/],
    ["a gzip archive", "trace.tsv", [0x1f, 0x8b, 8, 0, 0, 0], /gzip archive/],
    ["a PDF", "report.csv", [...Buffer.from("%PDF-1.7\n")], /PDF document/],
  ] as [string, string, number[], RegExp][])("%s named %s: exit 2, one line naming it and what it is", (...c) => {
    const [, name, bytes, what] = c;
    const f = path.join(dir, name);
    fs.writeFileSync(f, Buffer.from([...bytes, ...Buffer.from("0,1\n1,2\n")]));
    const res = cli([f, "--json"]);
    expect(res.status).toBe(2);
    expect(res.stdout).toBe("");
    const lines = res.stderr.split("\n").filter(Boolean);
    expect(lines.length).toBe(1);
    expect(lines[0]).toContain(f);
    expect(lines[0]).toMatch(what);
  });
});

describe("npm run analyze speaks the unit model", () => {
  it("a clamp capture in volts with --mv-per-amp reads amperes; settings stay in scope volts", () => {
    // 100 mV/A: 1 V at the scope is 10 A (definition of the clamp's scale)
    const g = generateStarter({ seed: 5, crankingRpm: 200, cylinders: 4, mvPerAmp: 100, sampleRateHz: 5e3 });
    const f = path.join(dir, "starter.csv");
    fs.writeFileSync(f, renderCsv(g.trace));
    const res = cli(
      [f, "--kind", "relative-compression", "--probe", "current-clamp", "--mv-per-amp", "100"].concat([
        "--cylinders",
        "4",
        "--json",
      ]),
    );
    expect(res.stderr).toBe("");
    const doc = JSON.parse(res.stdout);
    expect(doc.unit).toBe("A");
    expect(doc.scopeUnit).toBe("V");
    // the model's stroke rise is 90 A
    expect(Math.abs(doc.summary.peak.median - 90) / 90).toBeLessThan(0.1);
  });
});

describe("npm run analyze", () => {
  it("one file: one object in the contract's shape, equal to analyzeTrace's result", () => {
    const res = cli([
      files[0],
      "--kv-per-volt",
      "10",
      "--volts-per-div",
      "0.2",
      "--time-per-div",
      "0.005",
      "--trigger-level",
      "0.3",
      "--json",
    ]);
    expect(res.stderr).toBe("");
    expect(res.status).toBe(0);
    const doc = JSON.parse(res.stdout);
    expect(Object.keys(doc).slice(0, 7)).toEqual(["file", "kind", "unit", "trace", "events", "summary", "findings"]);
    expect(doc.file).toBe(files[0]);
    expect(doc.kind).toBe("secondary-ignition");
    expect(doc.unit).toBe("kV");
    // the reader's warnings (NaN cells filled, rows skipped…) belong to the contract too (docs/api.md)
    expect(Object.keys(doc.trace)).toEqual(["samples", "sampleRateHz", "durationS", "channels", "warnings"]);
    expect(doc.trace.warnings).toEqual([]);
    expect(doc.trace.sampleRateHz).toBe(1e6);
    expect(doc.events.length).toBe(2);
    for (const key of ["timeS", "peak", "burnTimeMs", "burnLevel", "oscillations"])
      expect(typeof doc.events[0][key]).toBe("number");
    expect(doc.summary.eventCount).toBe(2);
    expect(Math.abs(doc.summary.rpm - 3000)).toBeLessThan(30);
    for (const m of ["peak", "burnTimeMs", "burnLevel", "oscillations"])
      expect(Object.keys(doc.summary[m])).toEqual(["median", "min", "max"]);
    expect(doc.findings).toEqual([]);
    // the per-file object minus file/trace is exactly what the server stores from analyzeTrace
    const text = fs.readFileSync(files[0], "utf8");
    const direct = analyzeTrace(
      parseTraceText(text),
      {
        kind: "secondary-ignition",
        wasteSpark: false,
        voltsPerDiv: 0.2,
        timePerDivS: 0.005,
        triggerLevel: 0.3,
        kvPerVolt: 10,
      },
      { kind: "secondary-ignition", kvPerVolt: 10, wasteSpark: false },
    );
    const { file: _f, trace: _t, ...rest } = doc;
    expect(rest).toEqual(JSON.parse(JSON.stringify(direct)));
  });

  it("several files: traces and a comparison that names the odd coil; rpm null with one event", () => {
    const res = cli([...files, path.join(dir, "one.csv"), "--json"]);
    expect(res.status).toBe(0);
    const doc = JSON.parse(res.stdout);
    expect(Object.keys(doc)).toEqual(["traces", "comparison"]);
    expect(doc.traces.map((t: { file: string }) => t.file)).toEqual([...files, path.join(dir, "one.csv")]);
    // the millivolt file reads in volts like the others
    expect(doc.traces[3].unit).toBe("V");
    expect(
      Math.abs(doc.traces[3].summary.peak.median - doc.traces[0].summary.peak.median) /
        doc.traces[0].summary.peak.median,
    ).toBeLessThan(0.1);
    expect(doc.traces[4].summary.eventCount).toBe(1);
    expect(doc.traces[4].summary.rpm).toBeNull();
    expect(Object.keys(doc.comparison)).toEqual(["metrics", "outliers", "statements"]);
    expect(doc.comparison.outliers.length).toBeGreaterThan(0);
    for (const o of doc.comparison.outliers) {
      expect(Object.keys(o)).toEqual(["file", "metric", "value", "median", "score"]);
      expect(o.file).toBe(files[1]); // the fouled plug
    }
  });

  it("an unreadable file: exit code 2 and one line on stderr naming the file, the line and the reason", () => {
    const bad = path.join(dir, "bad.csv");
    const res = cli([files[0], bad, "--json"]);
    expect(res.status).toBe(2);
    expect(res.stdout).toBe("");
    const lines = res.stderr.split("\n").filter(Boolean);
    expect(lines.length).toBe(1);
    expect(lines[0]).toContain(bad);
    expect(lines[0]).toContain("line 4");
    expect(lines[0]).toContain('"n/a"');
    expect(res.stderr).not.toMatch(/\bat .*\.ts:\d+/); // no stack trace
    const missing = cli([path.join(dir, "missing.csv"), "--json"]);
    expect(missing.status).toBe(2);
    expect(missing.stderr.split("\n").filter(Boolean)).toEqual([
      `analyze: ${path.join(dir, "missing.csv")}: cannot read the file: no such file`,
    ]);
  });

  it("any failure says so in one line on stderr: work left unfinished, an error thrown outside the main chain", () => {
    // a preload that breaks the file reading the way an outside fault would: a stream that never ends
    // (the event loop runs dry with nothing written), or a rejection nothing awaits
    const stall = path.join(dir, "stall.mjs");
    fs.writeFileSync(
      stall,
      'import fs from "node:fs"; import { Readable } from "node:stream";\n' +
        "fs.createReadStream = () => new Readable({ read() {} });\n",
    );
    const reject = path.join(dir, "reject.mjs");
    fs.writeFileSync(
      reject,
      'import fs from "node:fs"; import { Readable } from "node:stream";\n' +
        "fs.createReadStream = () => { setTimeout(() => Promise.reject(new Error('boom')), 5);\n" +
        "  setTimeout(() => {}, 2000); return new Readable({ read() {} }); };\n",
    );
    for (const [pre, why] of [
      [stall, /^analyze: stopped before finishing .*no result written$/],
      [reject, /^analyze: internal error: boom$/],
    ] as const) {
      const res = spawnSync(
        process.execPath,
        ["--import", "tsx", "--import", pre, path.join(root, "scripts/analyze.ts"), files[0], "--json"],
        { cwd: root, encoding: "utf8" },
      );
      expect(res.status).toBe(1);
      expect(res.stdout).toBe("");
      const lines = res.stderr.split("\n").filter(Boolean);
      expect(lines.length).toBe(1);
      expect(lines[0]).toMatch(why);
    }
  });
});
