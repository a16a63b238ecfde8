/** The delimiter and the line end of an export, detected from a sample of its text. */
import { BLANK, effectiveCount, isNumericRow } from "./numbers";

/** `,` `;` tab, or runs of spaces (columns aligned with blanks, as some loggers write them). */
export type TraceDelimiter = "," | ";" | "\t" | " ";

/** Characters of text looked at to detect the delimiter. */
export const SNIFF_CHARS = 64 * 1024;

/** Splits a line at runs of spaces and tabs, without empty fields at either end. */
export function splitBlanks(line: string): string[] {
  const t = line.trim();
  return t ? t.split(/[ \t]+/) : [""];
}

/** Detects the delimiter from the numeric lines of a sample of the text. */
export function detectDelimiter(sample: string): TraceDelimiter {
  const lines = sample.split(/\r\n|\n|\r/);
  if (lines.length > 1 && sample.length >= SNIFF_CHARS) lines.pop(); // maybe cut mid-line
  const candidates: ("," | ";" | "\t")[] = ["\t", ";", ","];
  let best: TraceDelimiter | null = null;
  let bestScore = 0;
  for (const d of candidates) {
    let score = 0;
    for (const line of lines) {
      if (line.indexOf(d) < 0) continue;
      const fields = line.split(d);
      const n = effectiveCount(fields);
      if (n >= 2 && isNumericRow(fields, n)) score++;
    }
    if (score > bestScore) {
      best = d;
      bestScore = score;
    }
  }
  if (best) return best;
  // numbers in columns separated by blanks ("0.001  12.5  -3")
  let blanks = 0;
  for (const line of lines) {
    const fields = splitBlanks(line);
    if (fields.length >= 2 && isNumericRow(fields, fields.length)) blanks++;
  }
  if (blanks > 0) return " ";
  // one column of numbers (or none at all): take the delimiter the text lines use, if any
  for (const d of candidates) if (lines.some((l) => l.includes(d) && !BLANK.test(l))) return d;
  return ",";
}

export function detectNewline(sample: string): "\r\n" | "\n" | "\r" {
  const i = sample.search(/\r\n|\n|\r/);
  if (i < 0) return "\n";
  if (sample[i] === "\n") return "\n";
  return sample[i + 1] === "\n" ? "\r\n" : "\r";
}
