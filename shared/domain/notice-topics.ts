/**
 * What a user can choose about notices: one switch for the app and one for mail per topic. Each
 * notice kind (shared/domain/case-status.ts NoticeKind) belongs to one topic.
 */
import type { NoticeKind } from "./case-status";

export const noticeTopics = ["messages", "marks", "data_requests", "case_updates", "money"] as const;
export type NoticeTopic = (typeof noticeTopics)[number];

export interface NoticeChannels {
  inApp: boolean;
  mail: boolean;
}

export const noticeTopicOf: Readonly<Record<NoticeKind, NoticeTopic>> = {
  new_message: "messages",
  new_mark: "marks",
  data_requested: "data_requests",
  data_sent: "data_requests",
  case_offered: "case_updates",
  case_claimed: "case_updates",
  case_released: "case_updates",
  case_reassigned: "case_updates",
  case_answered: "case_updates",
  not_fixed: "case_updates",
  case_resolved: "case_updates",
  case_closed: "case_updates",
  deadline_near: "case_updates",
  deadline_missed: "case_updates",
  case_withdrawn: "case_updates",
  payment_authorized: "money",
  payment_failed: "money",
  payment_released: "money",
  receipt: "money",
  refund: "money",
  payout: "money",
};

/** How each topic is named on the settings page, and what a user who never chose gets. */
export const noticeTopicInfo: Readonly<Record<NoticeTopic, { label: string; hint: string; defaults: NoticeChannels }>> =
  {
    messages: {
      label: "Chat messages",
      hint: "A new message on one of your cases while you are not in its live review. Several fold into one notice.",
      defaults: { inApp: true, mail: true },
    },
    marks: {
      label: "Marks on traces",
      hint: "A new pin, span, level or note on a trace of your case while you are not watching.",
      defaults: { inApp: true, mail: false },
    },
    data_requests: {
      label: "Requests for more data",
      hint: "The expert asks for another capture or photo, or the shop answers such a request.",
      defaults: { inApp: true, mail: true },
    },
    case_updates: {
      label: "Where a case stands",
      hint: "Claimed, answered, confirmed, closed, offered, a deadline near or missed.",
      defaults: { inApp: true, mail: true },
    },
    money: {
      label: "Payments and receipts",
      hint: "A payment held, declined, released or refunded; receipts; payouts.",
      defaults: { inApp: true, mail: true },
    },
  };
