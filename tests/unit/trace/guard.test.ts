/**
 * What the reader refuses before it splits any row: a line longer than the documented bound
 * (docs/api.md: 65,536 characters) and a binary byte anywhere in the file, each with the line.
 *
 * The bound and the byte rule are product rules (issue 12 items 1 and 15; the byte rule is the
 * upload's own for a file's first bytes: control characters other than tab, line feed, form feed and
 * carriage return — ASCII, ANSI X3.4-1986, control codes 0x00–0x1F).
 */
import { describe, expect, it } from "vitest";
import {
  createTraceAccumulator,
  MAX_LINE_CHARS,
  parseTraceText,
  TRACE_PARSE_ERROR_CODES,
} from "../../../shared/trace/parse";
import { TraceParseError } from "../../../shared/trace/types";

function refusal(fn: () => unknown): TraceParseError {
  try {
    fn();
  } catch (e) {
    expect(e).toBeInstanceOf(TraceParseError);
    return e as TraceParseError;
  }
  throw new Error("expected a TraceParseError");
}

/** `total` characters of "1,1,1,…" with no line break, produced `chunk` characters at a time. */
function* oneLine(total: number, chunk: number): Generator<string> {
  const piece = "1,".repeat(chunk / 2);
  for (let sent = 0; sent < total; sent += chunk) yield piece;
}

describe("a line longer than the bound", () => {
  it("the bound is 64 KiB and its codes are documented", () => {
    // 64 KiB = 64 × 1024 = 65,536 (IEC 80000-13 binary prefix kibi = 2^10)
    expect(MAX_LINE_CHARS).toBe(65_536);
    expect(TRACE_PARSE_ERROR_CODES).toContain("line-too-long");
    expect(TRACE_PARSE_ERROR_CODES).toContain("binary-content");
  });

  it("100 MB of `1,1,1,…` with no line break is refused after reading about 64 KiB of it", () => {
    const total = 100 * 1000 * 1000; // 100 MB (issue 12 item 1)
    const chunk = 16 * 1024;
    const acc = createTraceAccumulator();
    let fed = 0;
    const e = refusal(() => {
      for (const c of oneLine(total, chunk)) {
        fed += c.length;
        acc.pushText(c);
      }
      acc.finish();
    });
    expect(e.code).toBe("line-too-long");
    expect(e.line).toBe(1);
    expect(e.message).toMatch(/^line 1: the line is longer than 65,536 characters/);
    // refused within the chunk that crossed 64 KiB: 65,536 / 16,384 = 4 chunks, crossed by the 5th
    expect(fed).toBe(5 * chunk);
    // the generator was left after those chunks: nothing near 100 MB was produced or held
    expect(fed).toBeLessThan(MAX_LINE_CHARS + chunk + 1);
  });

  it("a line of exactly the bound is read; one character more is refused, naming its line", () => {
    // line 1 header, line 2 data, line 3 the long line (by counting)
    const head = "Time (s),A\n0,1\n";
    const long = (n: number) => `1,${"0".repeat(n - 2)}`;
    expect(long(MAX_LINE_CHARS).length).toBe(MAX_LINE_CHARS);
    // "1,000…0": time 1 s, value 0 — a second sample, read
    const ok = parseTraceText(`${head}${long(MAX_LINE_CHARS)}\n`);
    expect(ok.samples).toBe(2);
    expect(ok.channels[0].values[1]).toBe(0);
    const e = refusal(() => parseTraceText(`${head}${long(MAX_LINE_CHARS + 1)}\n2,3\n`));
    expect(e).toMatchObject({ code: "line-too-long", line: 3 });
  });

  it("counts lines in CRLF and CR-only files, whatever the chunking", () => {
    const body = (nl: string) => `Time (s)${nl}0${nl}1${nl}${"9".repeat(MAX_LINE_CHARS + 5)}${nl}`;
    for (const nl of ["\r\n", "\r", "\n"]) {
      for (const size of [1, 3, 4096]) {
        const text = body(nl);
        const acc = createTraceAccumulator();
        const e = refusal(() => {
          for (let i = 0; i < text.length; i += size) acc.pushText(text.slice(i, i + size));
          acc.finish();
        });
        // header = line 1, "0" line 2, "1" line 3, the long line is line 4 (by counting)
        expect(e, JSON.stringify({ nl, size })).toMatchObject({ code: "line-too-long", line: 4 });
      }
    }
  });

  it("rows fed already split are held to the same bound", () => {
    const acc = createTraceAccumulator({ maxLineChars: 100 });
    const e = refusal(() => acc.pushRows([["Time"], ["0"], ["1".repeat(60), "2".repeat(60)]]));
    // 60 + 1 delimiter + 60 = 121 > 100; third row = line 3
    expect(e).toMatchObject({ code: "line-too-long", line: 3 });
  });
});

describe("a long preamble of long lines", () => {
  it("is read past the preamble's character budget, and its metadata is kept", () => {
    // 60 comment lines of 60,000 characters (3.6 M characters, beyond the 2 MiB budget), a line
    // stating the interval, then the data: 1 / 1e-4 s = 10 kS/s (definition)
    const comments = Array.from({ length: 60 }, (_, i) => `# note ${i} ${"x".repeat(60_000)}`);
    const data = Array.from({ length: 40 }, (_, i) => `${i % 7}`);
    const t = parseTraceText([...comments, "Sample interval: 1e-4", "Channel A (V)", ...data].join("\n"));
    expect(t.samples).toBe(40);
    expect(t.sampleRateHz).toBe(10_000);
    expect(t.channels[0]).toMatchObject({ name: "Channel A", unit: "V" });
  });
});

describe("binary bytes anywhere in the file", () => {
  const rows = (n: number) => Array.from({ length: n }, (_, i) => `${i * 1e-3},${i % 10}`);

  it("refuses a NUL far past the first 8 KB, naming its line", () => {
    const lines = ["Time (s),A", ...rows(5000)];
    // line 4001 (header is line 1): well past 8 KB of text (each row is ≥ 4 characters)
    lines[4000] = "3.999,\u00005";
    const text = lines.join("\n");
    expect(text.indexOf("\u0000")).toBeGreaterThan(8192);
    const e = refusal(() => parseTraceText(text));
    expect(e).toMatchObject({ code: "binary-content", line: 4001 });
    expect(e.message).toMatch(/binary byte \(0x00\)/);
  });

  it("refuses other control bytes but reads tab, form feed, CR and LF", () => {
    for (const b of [0x01, 0x08, 0x0b, 0x0e, 0x1b, 0x1f]) {
      const e = refusal(() => parseTraceText(`Time (s),A\n0,1\n1,${String.fromCharCode(b)}2\n`));
      expect(e, b.toString(16)).toMatchObject({ code: "binary-content", line: 3 });
    }
    // tab-separated with a form feed at the end of the file: read
    const t = parseTraceText("Time (s)\tA\r\n0\t1\r\n1\t2\r\n\f");
    expect(t.samples).toBe(2);
  });

  it("refuses a binary byte in rows fed already split", () => {
    const acc = createTraceAccumulator();
    const e = refusal(() =>
      acc.pushRows([
        ["Time", "A"],
        ["0", "1"],
        ["1", "\u0007"],
      ]),
    );
    expect(e).toMatchObject({ code: "binary-content", line: 3 });
  });
});
