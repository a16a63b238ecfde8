/**
 * The one formatter of dates, times, durations, counts and money for people, on both sides (pages,
 * chat, notices, mail), built on Intl. One locale for the whole product (its text is English) so
 * a date reads the same on a case page, in the chat and in a mail: "Dec 5, 2026, 2:05 PM".
 * The client shows times in the browser's time zone; mail, whose reader's zone is unknown, passes
 * `timeZone: "UTC"` and gets the zone named ("… 2:05 PM UTC"). Pure, browser-safe.
 */
import { formatCents } from "./domain/money";

/** The product's locale for every date and number it writes. */
export const APP_LOCALE = "en-US";

export interface ZoneOption {
  /** an IANA zone; absent: the runtime's own (the browser's on a page) */
  timeZone?: string;
}

type DateInput = Date | string | number | null | undefined;
const DASH = "—";

function toDate(v: DateInput): Date | null {
  if (v === null || v === undefined || v === "") return null;
  const d = v instanceof Date ? v : new Date(v);
  return Number.isNaN(d.getTime()) ? null : d;
}

const cache = new Map<string, Intl.DateTimeFormat>();
function dateFormat(options: Intl.DateTimeFormatOptions): Intl.DateTimeFormat {
  const key = JSON.stringify(options);
  let f = cache.get(key);
  if (!f) cache.set(key, (f = new Intl.DateTimeFormat(APP_LOCALE, options)));
  return f;
}

const zoneSuffix = (o: ZoneOption) => (o.timeZone === "UTC" ? " UTC" : "");

/** "Dec 5, 2026, 2:05 PM" (a dash for nothing or an invalid date). */
export function formatDateTime(v: DateInput, o: ZoneOption = {}): string {
  const d = toDate(v);
  if (!d) return DASH;
  return dateFormat({ dateStyle: "medium", timeStyle: "short", timeZone: o.timeZone }).format(d) + zoneSuffix(o);
}

/** "Dec 5, 2026". */
export function formatDate(v: DateInput, o: ZoneOption = {}): string {
  const d = toDate(v);
  return d ? dateFormat({ dateStyle: "medium", timeZone: o.timeZone }).format(d) : DASH;
}

/** "2:05 PM" (chat lines, "saved at"). */
export function formatTime(v: DateInput, o: ZoneOption = {}): string {
  const d = toDate(v);
  return d ? dateFormat({ timeStyle: "short", timeZone: o.timeZone }).format(d) + zoneSuffix(o) : DASH;
}

/** A whole number or a decimal in the product's locale: 12,480 · 1.5. */
export function formatNumber(n: number, maxFractionDigits = 0): string {
  if (!Number.isFinite(n)) return DASH;
  return new Intl.NumberFormat(APP_LOCALE, { maximumFractionDigits: maxFractionDigits }).format(n);
}

/** "1 message", "3 messages" (the count in the product's locale). */
export function formatCount(n: number, singular: string, plural = `${singular}s`): string {
  return `${formatNumber(n)} ${n === 1 ? singular : plural}`;
}

/** Money in integer minor units and a currency code as stored ("usd"): "$49.00". */
export function formatMoney(cents: number, currency = "usd"): string {
  return formatCents(cents, currency.toUpperCase(), APP_LOCALE);
}

/** A rate in basis points as a percentage: 2000 → "20%", 1950 → "19.5%". */
export function formatPercentBp(basisPoints: number): string {
  return new Intl.NumberFormat(APP_LOCALE, { style: "percent", maximumFractionDigits: 2 }).format(basisPoints / 10_000);
}

const unit = (value: number, u: "day" | "hour" | "minute") =>
  new Intl.NumberFormat(APP_LOCALE, { style: "unit", unit: u, unitDisplay: "short" }).format(value);

/** A span of time, rounded to the minute: "45 min", "3 hr 20 min", "2 days". */
export function formatDuration(ms: number): string {
  const min = Math.max(0, Math.round(ms / 60_000));
  if (min < 60) return unit(min, "minute");
  const h = Math.floor(min / 60);
  const m = min % 60;
  if (h < 48) return m ? `${unit(h, "hour")} ${unit(m, "minute")}` : unit(h, "hour");
  return unit(Math.round(h / 24), "day");
}

/** Time to a deadline: "in 3 hr 20 min", or "overdue by 12 min" once it has passed. */
export function formatTimeLeft(deadline: DateInput, now: number = Date.now()): { text: string; overdue: boolean } {
  const d = toDate(deadline);
  if (!d) return { text: "", overdue: false };
  const ms = d.getTime() - now;
  return ms <= 0
    ? { text: `overdue by ${formatDuration(-ms)}`, overdue: true }
    : { text: `in ${formatDuration(ms)}`, overdue: false };
}

/** File sizes: "812 B", "14 KB", "3.2 MB" (binary multiples, as the uploads count them). */
export function formatBytes(n: number): string {
  if (n < 1024) return `${formatNumber(n)} B`;
  if (n < 1024 * 1024) return `${formatNumber(n / 1024)} KB`;
  return `${formatNumber(n / 1024 / 1024, 1)} MB`;
}
