/**
 * The first stage of reading an export: every chunk of text is looked at before anything splits it
 * into rows, so that a file that is not a capture export is refused as soon as it shows itself:
 *
 * - a line longer than MAX_LINE_CHARS (64 KiB) — a scope export's line holds a time and a few
 *   values; a file of `1,1,1,…` with no line break is refused after its first 64 KiB, and no more
 *   than one chunk of one line is ever held in memory;
 * - a binary byte anywhere in the file (a control character other than tab, line feed, form feed
 *   and carriage return: the same rule the upload applies to the first bytes of a file).
 *
 * Both refusals name the line (1-based). Lines end at "\n" (LF or CRLF files) or at "\r" (CR-only
 * files), decided at the first line end.
 */
import { TraceParseError } from "../types";

/** Longest line accepted, in characters (UTF-16 code units; bytes for ASCII text): 64 KiB. */
export const MAX_LINE_CHARS = 64 * 1024;

/** Control characters other than tab (09), line feed (0A), form feed (0C) and carriage return (0D). */
// eslint-disable-next-line no-control-regex -- matching control characters is the point: they mark a binary file
const BINARY = /[\x00-\x08\x0B\x0E-\x1F]/;

function hex(c: string): string {
  return `0x${c.charCodeAt(0).toString(16).padStart(2, "0").toUpperCase()}`;
}

export function binaryRefusal(line: number, char: string): TraceParseError {
  return new TraceParseError(
    "binary-content",
    `the file holds a binary byte (${hex(char)}), so it is not CSV or TSV text; export the capture as CSV or TSV text and upload that file`,
    line,
  );
}

export function longLineRefusal(line: number, max: number): TraceParseError {
  return new TraceParseError(
    "line-too-long",
    `the line is longer than ${max.toLocaleString("en-US")} characters, the most a line may hold; an export's line holds a time and a few values, so this file is not a capture export (or its lines are not separated by line breaks)`,
    line,
  );
}

export class TextGuard {
  /** line ends seen so far */
  private ends = 0;
  /** characters of the current (unfinished) line seen so far */
  private open = 0;
  /** the line end: "\n" (LF, CRLF) or "\r" (CR only); null until the first one is seen */
  private nl: "\n" | "\r" | null = null;
  /** the last chunk ended with "\r": the next chunk's first character decides LF/CR */
  private pendingCR = false;

  constructor(private readonly max: number = MAX_LINE_CHARS) {}

  /** Checks a chunk of text (in file order); throws TraceParseError. */
  scan(chunk: string): void {
    if (this.nl === null) this.detect(chunk);
    const nl = this.nl;
    const bin = BINARY.exec(chunk);
    const binAt = bin ? bin.index : -1;
    let start = 0;
    for (;;) {
      const i = nl === null ? -1 : chunk.indexOf(nl, start);
      const end = i < 0 ? chunk.length : i;
      if (binAt >= start && binAt < end) throw binaryRefusal(this.ends + 1, bin![0]);
      if (this.open + (end - start) > this.max) throw longLineRefusal(this.ends + 1, this.max);
      if (i < 0) {
        this.open += end - start;
        return;
      }
      this.ends++;
      this.open = 0;
      start = i + 1;
    }
  }

  /** Checks rows already split into fields (one per line); `line` is the first row's line number. */
  rows(rows: string[][]): void {
    for (const row of rows) {
      this.ends++;
      let len = row.length - 1;
      for (const f of row) {
        len += f.length;
        const bin = BINARY.exec(f);
        if (bin) throw binaryRefusal(this.ends, bin[0]);
      }
      if (len > this.max) throw longLineRefusal(this.ends, this.max);
    }
  }

  private detect(chunk: string) {
    if (this.pendingCR && chunk.length > 0) {
      this.nl = chunk[0] === "\n" ? "\n" : "\r";
      // the "\r" that ended the last chunk was a line end in a CR file: count it now
      if (this.nl === "\r") {
        this.ends++;
        this.open = 0;
      }
      this.pendingCR = false;
      return;
    }
    const i = chunk.search(/[\r\n]/);
    if (i < 0) return;
    if (chunk[i] === "\n") this.nl = "\n";
    else if (i + 1 < chunk.length) this.nl = chunk[i + 1] === "\n" ? "\n" : "\r";
    else this.pendingCR = true;
  }
}
