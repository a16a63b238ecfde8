import { formatDateTime, formatMoney, formatTimeLeft } from "../../../../shared/format";

/** "$49.00" from integer cents and a Stripe currency code ("usd"). */
export const money = (cents: number, currency = "usd") => formatMoney(cents, currency);

/** "24 hours", "2 hours", "90 minutes", "3 days". */
export function deadlineWindow(minutes: number): string {
  if (minutes % (24 * 60) === 0 && minutes >= 48 * 60) return `${minutes / (24 * 60)} days`;
  if (minutes % 60 === 0) return minutes === 60 ? "1 hour" : `${minutes / 60} hours`;
  return `${minutes} minutes`;
}

/** One date format everywhere (shared/format.ts). */
export const when = (iso: string | null | undefined): string => formatDateTime(iso);

/** "in 3 hr 20 min", "overdue by 12 min" relative to now. */
export function timeLeft(iso: string | null | undefined, now = Date.now()): string {
  return formatTimeLeft(iso, now).text;
}

export const paymentWords: Record<string, string> = {
  creating: "Starting checkout",
  pending: "Waiting for payment",
  failed: "Payment did not go through",
  expired: "Checkout closed",
  authorized: "Held on the card (charged when the answer is delivered)",
  captured: "Charged",
  released: "Hold released, nothing charged",
  refunded: "Charged, then refunded in full",
};
