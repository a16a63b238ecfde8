/**
 * Date and time-of-day stamps in a time column, as data loggers write them:
 * "2022-06-06 18:43:33.250", "2022/06/06 18:43:33", "06.06.2022 18:43:33", "6/13/2022 6:43:33 PM",
 * "18:43:33.250". Read as seconds on one running scale, so that differences between rows are right.
 *
 * Date order: year first (ISO 8601) when the first part has four digits; otherwise day-month-year,
 * unless the first part cannot be a month's day order (second part above 12: month-day-year).
 * Only differences matter for a capture, so the order only counts when the date changes mid-file.
 */

const STAMP =
  /^\s*(?:(\d{1,4})[-/.](\d{1,2})[-/.](\d{1,4})(?:[ T]+|\s*$))?(?:(\d{1,2}):(\d{2})(?::(\d{2}(?:[.,]\d+)?))?\s*(am|pm)?)?\s*(?:z|utc)?\s*$/i;

/** Seconds of a date/time stamp on a running scale (days since 1970 × 86400 + time of day), or NaN. */
export function clockSeconds(s: string): number {
  const m = STAMP.exec(s);
  if (!m) return NaN;
  const hasDate = m[1] !== undefined;
  const hasTime = m[4] !== undefined;
  if (!hasDate && !hasTime) return NaN;
  let day = 0;
  if (hasDate) {
    const a = +m[1];
    const b = +m[2];
    const c = +m[3];
    let y: number;
    let mo: number;
    let d: number;
    if (m[1].length === 4) [y, mo, d] = [a, b, c];
    else if (b > 12) [y, mo, d] = [c, a, b];
    else [y, mo, d] = [c, b, a];
    if (y < 100) y += 2000;
    if (!(mo >= 1 && mo <= 12 && d >= 1 && d <= 31)) return NaN;
    day = Date.UTC(y, mo - 1, d) / 86_400_000;
  }
  let secs = 0;
  if (hasTime) {
    let h = +m[4];
    const min = +m[5];
    const sec = m[6] ? +m[6].replace(",", ".") : 0;
    const ampm = m[7]?.toLowerCase();
    if (ampm === "pm" && h < 12) h += 12;
    if (ampm === "am" && h === 12) h = 0;
    if (!(h < 24 && min < 60 && sec < 61)) return NaN;
    secs = h * 3600 + min * 60 + sec;
  }
  return day * 86_400 + secs;
}

/** Whether a field is a date/time stamp (not a plain number). */
export function isClockField(s: string): boolean {
  return /[:/]|\d[-.]\d{1,2}[-.]\d/.test(s) && !Number.isNaN(clockSeconds(s));
}
