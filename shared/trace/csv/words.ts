/** Small helpers for the reader's messages. */

/** Lines named in a warning or error before "…". */
export const LIST_LINES = 10;

export function columnLabel(i: number): string {
  return `column ${i + 1}`;
}

export function listLines(lines: number[], total: number): string {
  const shown = lines.slice(0, LIST_LINES).join(", ");
  return total > lines.length || total > LIST_LINES ? `${shown}, …` : shown;
}

export function quote(s: string): string {
  const t = s.trim();
  return JSON.stringify(t.length > 40 ? `${t.slice(0, 40)}…` : t);
}

/** Rounds a rate derived from printed times to 12 significant digits (1e6 rather than 999999.9999999999). */
export function tidyRate(rate: number): number {
  return Number(rate.toPrecision(12));
}

export const plural = (n: number, one: string, many = `${one}s`) => (n === 1 ? one : many);
