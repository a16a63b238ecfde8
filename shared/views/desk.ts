/**
 * Response shapes of the desk's reading aids: notice settings, what a case waits on, unread counts,
 * the admin's filter choices. Built by the server (which `satisfies` them), read by the client.
 */
import type { NoticeTopic } from "../domain/notice-topics";
import type { CaseWaiting } from "../domain/case-waiting";
import type { DeadlineRisk } from "../domain/deadline-risk";

export type { CaseWaiting, DeadlineRisk };

/** GET /api/me/notice-settings (and the answer of PUT) */
export interface NoticeSettingsView {
  topics: { topic: NoticeTopic; label: string; hint: string; inApp: boolean; mail: boolean }[];
}

/** New chat messages and marks by others since the user last had the case's live review open. */
export interface UnreadView {
  messages: number;
  marks: number;
}

/** POST /api/cases/:id/seen */
export interface SeenView {
  caseId: string;
  seq: number;
  /** the user's notices about new messages and marks on this case that this marked read */
  noticesRead: number;
}

/** GET /api/admin/case-filters: the shops and experts an admin can filter the case list by. */
export interface CaseFiltersView {
  shops: { id: string; name: string }[];
  experts: { id: string; name: string; status: string }[];
}
