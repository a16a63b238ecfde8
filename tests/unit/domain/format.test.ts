/**
 * The one formatter (shared/format.ts). Expected strings are CLDR's en-US patterns as ICU prints
 * them (unicode.org CLDR, en "medium" date "MMM d, y", "short" time "h:mm a", the date-time glue
 * "{1}, {0}"; unit "short" forms "hr", "min", "days"; grouping by thousands with ","). Newer ICU
 * puts a narrow no-break space (U+202F) before AM/PM; the comparison folds it to a space.
 */
import { describe, expect, it } from "vitest";
import {
  formatBytes,
  formatCount,
  formatDate,
  formatDateTime,
  formatDuration,
  formatMoney,
  formatNumber,
  formatPercentBp,
  formatTime,
  formatTimeLeft,
} from "../../../shared/format";

const fold = (s: string) => s.replace(/[\u202f\u00a0]/g, " ");
const at = new Date(Date.UTC(2026, 11, 5, 14, 5, 0)); // 5 December 2026, 14:05 UTC

describe("dates and times", () => {
  it("date and time, date, time — one shape everywhere, the zone named for mail", () => {
    expect(fold(formatDateTime(at, { timeZone: "UTC" }))).toBe("Dec 5, 2026, 2:05 PM UTC");
    expect(formatDate(at, { timeZone: "UTC" })).toBe("Dec 5, 2026");
    expect(fold(formatTime(at, { timeZone: "UTC" }))).toBe("2:05 PM UTC");
    // another zone moves the clock, not the shape: 14:05 UTC is 09:05 in New York in December (UTC−5)
    expect(fold(formatDateTime(at, { timeZone: "America/New_York" }))).toBe("Dec 5, 2026, 9:05 AM");
  });
  it("accepts ISO strings and epoch milliseconds; nothing or an invalid date is a dash", () => {
    expect(formatDate(at.toISOString(), { timeZone: "UTC" })).toBe("Dec 5, 2026");
    expect(formatDate(at.getTime(), { timeZone: "UTC" })).toBe("Dec 5, 2026");
    for (const v of [null, undefined, "", "not a date"]) expect(formatDateTime(v)).toBe("—");
  });
});

describe("durations and deadlines", () => {
  it("rounds to the minute and names the units", () => {
    expect(formatDuration(45 * 60_000)).toBe("45 min");
    expect(formatDuration((3 * 60 + 20) * 60_000)).toBe("3 hr 20 min");
    expect(formatDuration(2 * 3_600_000)).toBe("2 hr");
    expect(formatDuration(3 * 24 * 3_600_000)).toBe("3 days");
  });
  it("says how long is left, or how long ago the deadline passed", () => {
    const now = at.getTime();
    expect(formatTimeLeft(new Date(now + 90 * 60_000), now)).toEqual({ text: "in 1 hr 30 min", overdue: false });
    expect(formatTimeLeft(new Date(now - 12 * 60_000), now)).toEqual({ text: "overdue by 12 min", overdue: true });
    expect(formatTimeLeft(null, now)).toEqual({ text: "", overdue: false });
  });
});

describe("numbers and money", () => {
  it("groups thousands and keeps the decimals asked for", () => {
    expect(formatNumber(12480)).toBe("12,480");
    expect(formatNumber(1.25, 1)).toBe("1.3"); // half-expand rounding (ECMA-402 default)
    expect(formatCount(1, "message")).toBe("1 message");
    expect(formatCount(1200, "message")).toBe("1,200 messages");
  });
  it("money from integer cents and the stored currency code", () => {
    expect(formatMoney(4900, "usd")).toBe("$49.00");
    expect(formatMoney(123456, "usd")).toBe("$1,234.56");
    expect(formatMoney(4900, "eur")).toBe("€49.00");
  });
  it("rates in basis points (1 bp = 0.01 %)", () => {
    expect(formatPercentBp(2000)).toBe("20%");
    expect(formatPercentBp(1950)).toBe("19.5%");
  });
  it("file sizes in binary multiples", () => {
    expect(formatBytes(812)).toBe("812 B");
    expect(formatBytes(14 * 1024)).toBe("14 KB");
    expect(formatBytes(3.2 * 1024 * 1024)).toBe("3.2 MB");
  });
});
