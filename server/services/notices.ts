/**
 * The catalogue of notices: every in-app notice and mail the desk sends, with its wording, in one
 * place. Each function builds the notice from the rows it talks about; who receives it is the
 * caller's decision (the action table in shared/domain/case-status.ts lists which action sends which).
 * `notify` (./notifications.ts) stores, pushes and mails them after the commit.
 */
import { splitCents } from "../../shared/domain/money";
import { formatDateTime, formatMoney } from "../../shared/format";
import { ignitionSafetyNote } from "../../shared/schemas/queue";
import type { NoticeKind } from "../../shared/domain/case-status";

export interface Notice {
  kind: NoticeKind;
  caseId?: string | null;
  title: string;
  /** paragraphs; the first is the in-app body */
  paragraphs: string[];
  /** a path inside the app, e.g. /cases/abc; becomes the mail's button */
  link?: string;
  actionLabel?: string;
  /** false: in the app only, no mail */
  mail?: boolean;
  /**
   * Notices that come in bursts (chat messages, marks): while the user still has an unread notice
   * of the same kind on the same case, that one is updated with these texts for the new count
   * instead of a new notice, and no further mail goes out.
   */
  fold?: (count: number) => { title: string; paragraphs: string[] };
  /** how many happenings of a burst this notice stands for at once (default 1; see `fold`) */
  times?: number;
}

/** What the texts need of a case. */
export interface NoticeCase {
  id: string;
  label: string;
  deadlineAt: Date | null;
  year?: number | null;
  make?: string | null;
  model?: string | null;
  engine?: string | null;
  system?: string | null;
}

/** What the texts need of a payment. */
export interface NoticePayment {
  amountCents: number;
  currency: string;
  tierLabel: string;
  deskShareBasisPoints: number;
  cardBrand: string | null;
  cardLast4: string | null;
  receiptNumber: string;
}

const casePath = (c: NoticeCase) => `/cases/${c.id}`;
/** Mail's reader's time zone is unknown: dates are written in UTC, the zone named (shared/format.ts). */
const utc = (d: Date | null) => (d ? formatDateTime(d, { timeZone: "UTC" }) : "");
const money = (cents: number, currency: string) => formatMoney(cents, currency);

export const notices = {
  paymentAuthorized: (c: NoticeCase, p: NoticePayment): Notice => ({
    kind: "payment_authorized",
    caseId: c.id,
    title: `Paid and queued: ${c.label}`,
    paragraphs: [
      `Your card was authorised for ${money(p.amountCents, p.currency)} (${p.tierLabel}). The case is now in the queue and the answer is due by ${utc(c.deadlineAt)}.`,
      "The amount is only held for now: it is charged when an expert delivers the answer, and released if the desk misses the deadline.",
    ],
    link: casePath(c),
    actionLabel: "Open the case",
  }),

  paymentFailed: (c: NoticeCase, message: string): Notice => ({
    kind: "payment_failed",
    caseId: c.id,
    title: `Payment did not go through: ${c.label}`,
    paragraphs: [message],
    link: casePath(c),
    mail: false,
  }),

  holdReleased: (c: NoticeCase, p: NoticePayment, caseEnded: boolean): Notice => ({
    kind: "payment_released",
    caseId: c.id,
    title: `Hold released: ${c.label}`,
    paragraphs: [
      `The hold of ${money(p.amountCents, p.currency)} on your card has been released; nothing was charged for this case.`,
      ...(caseEnded
        ? ["The card authorisation ran out before an answer was delivered, so the case was closed as refunded."]
        : []),
    ],
    link: casePath(c),
  }),

  receipt: (c: NoticeCase, p: NoticePayment): Notice => ({
    kind: "receipt",
    caseId: c.id,
    title: `Receipt: ${c.label}`,
    paragraphs: [
      `Charged ${money(p.amountCents, p.currency)} for the ${p.tierLabel} second opinion on this case.`,
      `Receipt number ${p.receiptNumber}. Card ${p.cardBrand ?? "card"} ending ${p.cardLast4 ?? "····"}.`,
      "The receipt with the seller's details and the tax the price includes is on the billing page.",
    ],
    link: "/billing",
    actionLabel: "See billing",
  }),

  refund: (c: NoticeCase, amountCents: number, currency: string): Notice => ({
    kind: "refund",
    caseId: c.id,
    title: `Refund: ${c.label}`,
    paragraphs: [
      `${money(amountCents, currency)} has been refunded to your card. It can take a few days to show on the statement.`,
    ],
    link: "/billing",
  }),

  caseOffered: (c: NoticeCase, p: NoticePayment | null): Notice => {
    const vehicle = [c.year, c.make, c.model, c.engine].filter(Boolean).join(" ");
    const earning = p ? splitCents(p.amountCents, p.deskShareBasisPoints).expertCents : null;
    return {
      kind: "case_offered",
      caseId: c.id,
      title: `Case offered: ${c.label}`,
      paragraphs: [
        `A ${p?.tierLabel ?? ""} case matching your specialties is waiting in the queue${vehicle ? ` (${vehicle}, ${c.system ?? "system not given"})` : ""}. The answer is due by ${utc(c.deadlineAt) || "soon"}.`,
        ...(earning != null && p ? [`Your share when you answer: ${money(earning, p.currency)}.`] : []),
        "The first expert to claim it takes it.",
      ],
      link: "/queue",
      actionLabel: "Open the queue",
    };
  },

  caseClaimed: (c: NoticeCase, expertName: string): Notice => ({
    kind: "case_claimed",
    caseId: c.id,
    title: `An expert took your case: ${c.label}`,
    paragraphs: [
      `${expertName} has claimed the case and is looking at it now. You will hear when they answer or need another capture.`,
    ],
    link: casePath(c),
    actionLabel: "Open the case",
  }),

  caseReleased: (c: NoticeCase): Notice => ({
    kind: "case_released",
    caseId: c.id,
    title: `Back in the queue: ${c.label}`,
    paragraphs: [
      "The expert handed the case back; it is in the queue again for another expert. The deadline stays the same.",
    ],
    link: casePath(c),
    mail: false,
  }),

  caseReassignedToYou: (c: NoticeCase): Notice => ({
    kind: "case_reassigned",
    caseId: c.id,
    title: `Case handed to you: ${c.label}`,
    paragraphs: [`The desk has handed this case to you. The answer is due by ${utc(c.deadlineAt)}.`],
    link: casePath(c),
    actionLabel: "Open the case",
  }),

  caseReassignedAway: (c: NoticeCase): Notice => ({
    kind: "case_reassigned",
    caseId: c.id,
    title: `Case handed to another expert: ${c.label}`,
    paragraphs: ["The desk has handed this case to another expert; it is no longer in your list."],
    link: "/queue",
    mail: false,
  }),

  dataRequested: (c: NoticeCase, expertName: string, message: string): Notice => ({
    kind: "data_requested",
    caseId: c.id,
    title: `More data requested: ${c.label}`,
    paragraphs: [
      `${expertName} asks: “${message}”`,
      "Add the capture or photo to the case, or mark the request as answered. The deadline is paused meanwhile.",
    ],
    link: casePath(c),
    actionLabel: "Open the case",
  }),

  dataSent: (c: NoticeCase, how: "sent" | "uploaded", note?: string): Notice => ({
    kind: "data_sent",
    caseId: c.id,
    title: `The shop answered your request: ${c.label}`,
    paragraphs: [
      how === "uploaded"
        ? "New material was added to the case."
        : `The shop says the data is in${note ? `: “${note}”` : "."}`,
      "The case is back with you.",
    ],
    link: casePath(c),
  }),

  caseWithdrawn: (c: NoticeCase): Notice => ({
    kind: "case_withdrawn",
    caseId: c.id,
    title: `Withdrawn: ${c.label}`,
    paragraphs: ["The shop withdrew this case before anyone claimed it."],
    mail: false,
  }),

  caseAnswered: (
    c: NoticeCase,
    expertName: string,
    round: number,
    answer: { diagnosis: string; recommendedFix: string },
  ): Notice => ({
    kind: "case_answered",
    caseId: c.id,
    title: `Answer ready: ${c.label}`,
    paragraphs: [
      `${expertName} has answered${round > 1 ? " again" : ""}. Diagnosis: ${answer.diagnosis.slice(0, 300)}`,
      `Recommended fix: ${answer.recommendedFix.slice(0, 300)}`,
      ignitionSafetyNote,
      "Once you have tried the fix, tell us whether it worked.",
    ],
    link: casePath(c),
    actionLabel: "Read the answer",
  }),

  fixConfirmed: (c: NoticeCase, rating: number | undefined): Notice => ({
    kind: "case_resolved",
    caseId: c.id,
    title: `Fix confirmed: ${c.label}`,
    paragraphs: ["The shop confirmed your fix worked.", ...(rating ? [`Rating: ${rating} of 5.`] : [])],
    link: casePath(c),
  }),

  notFixed: (c: NoticeCase, note: string | undefined): Notice => ({
    kind: "not_fixed",
    caseId: c.id,
    title: `Not fixed yet: ${c.label}`,
    paragraphs: [
      `The shop says the fix did not work${note ? `: “${note}”` : "."}`,
      "The case is back with you for a second answer.",
    ],
    link: casePath(c),
  }),

  closedNotFixed: (c: NoticeCase): Notice => ({
    kind: "case_closed",
    caseId: c.id,
    title: `Closed without a fix: ${c.label}`,
    paragraphs: ["The shop reported the second answer did not fix the car either; the case is closed."],
    link: casePath(c),
    mail: false,
  }),

  closedUnconfirmed: (c: NoticeCase, days: number): Notice => ({
    kind: "case_closed",
    caseId: c.id,
    title: `Closed: ${c.label}`,
    paragraphs: [`No confirmation came within ${days} days of the answer, so the case has been closed.`],
    link: casePath(c),
    mail: false,
  }),

  deadlineNear: (c: NoticeCase, claimed: boolean, minutes: number): Notice => ({
    kind: "deadline_near",
    caseId: c.id,
    title: `Deadline near (${minutes} min): ${c.label}`,
    paragraphs: [
      claimed
        ? `The answer to this case is due in ${minutes} minutes.`
        : `This case is still unclaimed and its answer is due in ${minutes} minutes.`,
      "If the deadline passes without an answer, the shop's card hold is released and nothing is paid.",
    ],
    link: claimed ? casePath(c) : "/queue",
  }),

  deadlineMissedShop: (c: NoticeCase, waitingForData: boolean): Notice => ({
    kind: "deadline_missed",
    caseId: c.id,
    title: `Deadline missed, nothing charged: ${c.label}`,
    paragraphs: [
      waitingForData
        ? "The card authorisation for this case was about to run out while the case waited for more data, so the desk closed it."
        : "The desk did not deliver an answer by the deadline. We are sorry.",
      "The hold on your card has been released: nothing was charged. You can open a new case at any time.",
    ],
    link: casePath(c),
  }),

  deadlineMissedExpert: (c: NoticeCase): Notice => ({
    kind: "deadline_missed",
    caseId: c.id,
    title: `Deadline missed: ${c.label}`,
    paragraphs: ["The deadline of this case passed without an answer; it was closed and the shop's hold released."],
    link: "/queue",
  }),

  newMessage: (c: NoticeCase, authorName: string, text: string): Notice => {
    const quote = `“${text.length > 300 ? `${text.slice(0, 299).trimEnd()}…` : text}”`;
    return {
      kind: "new_message",
      caseId: c.id,
      title: `New message from ${authorName}: ${c.label}`,
      paragraphs: [`${authorName} wrote: ${quote}`, "Open the case to answer in its chat."],
      link: casePath(c),
      actionLabel: "Open the chat",
      fold: (n) => ({
        title: `${n} new messages: ${c.label}`,
        paragraphs: [`The latest, from ${authorName}: ${quote}`, "Open the case to answer in its chat."],
      }),
    };
  },

  newMark: (c: NoticeCase, authorName: string, what: string, label: string | null): Notice => ({
    kind: "new_mark",
    caseId: c.id,
    title: `${authorName} marked a trace: ${c.label}`,
    paragraphs: [
      `${authorName} added a ${what}${label ? `: “${label.slice(0, 200)}”` : "."}`,
      "Open the case to see it on the trace.",
    ],
    link: casePath(c),
    actionLabel: "See the mark",
    fold: (n) => ({
      title: `${n} new marks on the traces: ${c.label}`,
      paragraphs: [`The latest, from ${authorName}: a ${what}${label ? ` “${label.slice(0, 200)}”` : ""}.`],
    }),
  }),

  payoutSent: (amountCents: number, currency: string, transferId: string): Notice => ({
    kind: "payout",
    title: `Payout sent: ${money(amountCents, currency)}`,
    paragraphs: [
      `We sent ${money(amountCents, currency)} of your earnings to your payout account (transfer ${transferId}).`,
    ],
    link: "/earnings",
    actionLabel: "See earnings",
  }),
};
