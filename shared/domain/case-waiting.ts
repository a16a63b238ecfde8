/**
 * What a case is waiting on, said to the person looking at it: the tech's home and the case lists
 * show it beside each open case ("the expert asked for another capture", "answer ready to confirm").
 * Pure; the server fills it in for each list row, relative to the reader.
 */
import type { CaseStatus } from "./case-status";

/** Who has the next move: the reader, the shop, the expert, the desk, or nobody (the case is over). */
export type WaitingOn = "you" | "shop" | "expert" | "desk" | "nobody";

export interface CaseWaiting {
  on: WaitingOn;
  text: string;
}

export interface WaitingFacts {
  status: CaseStatus;
  /** how the reader stands to the case */
  reader: "shop" | "expert" | "admin";
  /** drafts: is everything the desk needs filled in; how many things are missing */
  ready?: boolean;
  missing?: number;
  expertName?: string | null;
  /** the expert's request while the case waits for more data */
  needsDataMessage?: string | null;
  /** set when the payment of the case did not go through */
  paymentProblem?: boolean;
}

const clip = (s: string, n = 90) => (s.length > n ? `${s.slice(0, n - 1).trimEnd()}…` : s);

function forShop(f: WaitingFacts): CaseWaiting {
  const expert = f.expertName ?? "The expert";
  switch (f.status) {
    case "draft":
      return f.ready
        ? { on: "you", text: "Ready to submit: choose how fast and pay" }
        : { on: "you", text: `Draft: ${f.missing ?? 1} thing${f.missing === 1 ? "" : "s"} still to fill in` };
    case "awaiting_payment":
      return {
        on: "you",
        text: f.paymentProblem ? "The payment did not go through: try again" : "Waiting for your payment",
      };
    case "queued":
      return { on: "desk", text: "Paid; waiting for an expert to take it" };
    case "claimed":
      return { on: "expert", text: `${expert} is working on it` };
    case "needs_data":
      return {
        on: "you",
        text: f.needsDataMessage
          ? `${expert} asked for more data: “${clip(f.needsDataMessage)}”`
          : `${expert} asked for another capture`,
      };
    case "answered":
      return { on: "you", text: "Answer ready: try the fix and confirm whether it worked" };
    default:
      return over(f.status);
  }
}

function forExpert(f: WaitingFacts): CaseWaiting {
  switch (f.status) {
    case "queued":
      return { on: "expert", text: "In the queue, free to claim" };
    case "claimed":
      return { on: "you", text: "Yours to answer" };
    case "needs_data":
      return { on: "shop", text: "Waiting for the shop's data (the deadline is paused)" };
    case "answered":
      return { on: "shop", text: "Answered; waiting for the shop to confirm the fix" };
    default:
      return over(f.status);
  }
}

function forAdmin(f: WaitingFacts): CaseWaiting {
  switch (f.status) {
    case "draft":
      return { on: "shop", text: "Draft at the shop" };
    case "awaiting_payment":
      return {
        on: "shop",
        text: f.paymentProblem ? "Payment declined; the shop may try again" : "Waiting for payment",
      };
    case "queued":
      return { on: "desk", text: "Waiting for an expert to claim it" };
    case "claimed":
      return { on: "expert", text: `With ${f.expertName ?? "an expert"}` };
    case "needs_data":
      return { on: "shop", text: "Waiting for the shop's data (the deadline is paused)" };
    case "answered":
      return { on: "shop", text: "Answered; waiting for the shop's confirmation" };
    default:
      return over(f.status);
  }
}

function over(status: CaseStatus): CaseWaiting {
  const text: Partial<Record<CaseStatus, string>> = {
    resolved: "Fix confirmed",
    closed: "Closed",
    withdrawn: "Withdrawn",
    refunded: "Closed, no charge",
  };
  return { on: "nobody", text: text[status] ?? "Nothing waiting" };
}

export function caseWaiting(f: WaitingFacts): CaseWaiting {
  return f.reader === "shop" ? forShop(f) : f.reader === "expert" ? forExpert(f) : forAdmin(f);
}
