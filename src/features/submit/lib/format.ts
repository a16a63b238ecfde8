import { formatCents } from "../../../../shared/domain/money";

/** "$49.00" from integer cents and a Stripe currency code ("usd"). */
export const money = (cents: number, currency = "usd") => formatCents(cents, currency.toUpperCase());

/** "24 hours", "2 hours", "90 minutes", "3 days". */
export function deadlineWindow(minutes: number): string {
  if (minutes % (24 * 60) === 0 && minutes >= 48 * 60) return `${minutes / (24 * 60)} days`;
  if (minutes % 60 === 0) return minutes === 60 ? "1 hour" : `${minutes / 60} hours`;
  return `${minutes} minutes`;
}

export function when(iso: string | null | undefined): string {
  if (!iso) return "—";
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? "—" : d.toLocaleString(undefined, { dateStyle: "medium", timeStyle: "short" });
}

/** "in 3 h 20 min", "in 12 min", "overdue" relative to now. */
export function timeLeft(iso: string | null | undefined, now = Date.now()): string {
  if (!iso) return "";
  const ms = new Date(iso).getTime() - now;
  if (ms <= 0) return "overdue";
  const min = Math.round(ms / 60_000);
  if (min < 60) return `in ${min} min`;
  const h = Math.floor(min / 60);
  const m = min % 60;
  if (h < 48) return `in ${h} h${m ? ` ${m} min` : ""}`;
  return `in ${Math.round(h / 24)} days`;
}

export const paymentWords: Record<string, string> = {
  creating: "Starting checkout",
  pending: "Waiting for payment",
  failed: "Payment did not go through",
  expired: "Checkout closed",
  authorized: "Held on the card (charged when the answer is delivered)",
  captured: "Charged",
  released: "Hold released — nothing charged",
  refunded: "Refunded",
};
