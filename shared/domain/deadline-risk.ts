/**
 * Is a case's answer deadline at risk? One rule for the admin's list (filter and order, mirrored
 * in SQL by server/services/cases.ts with these constants) and for the badges on the pages.
 *
 * Only a case waiting for the desk has a running deadline: queued (no expert yet) or claimed. A
 * case waiting for more data has its deadline paused (it moves on when the data arrives).
 * At risk: less than an hour left, or less than a quarter of the time the case was given.
 */
export type DeadlineRisk = "overdue" | "at_risk" | "ok";

export const RUNNING_DEADLINE_STATES = ["queued", "claimed"] as const;
/** at risk below this much time left, whatever the window */
export const AT_RISK_MIN_MS = 60 * 60_000;
/** at risk below this share of the window (deadline − the time the case was paid) */
export const AT_RISK_SHARE = 0.25;

export function deadlineRisk(
  status: string,
  deadlineAt: Date | string | null | undefined,
  startedAt: Date | string | null | undefined,
  now: number = Date.now(),
): DeadlineRisk | null {
  if (!deadlineAt || !(RUNNING_DEADLINE_STATES as readonly string[]).includes(status)) return null;
  const end = new Date(deadlineAt).getTime();
  const start = startedAt ? new Date(startedAt).getTime() : end;
  const left = end - now;
  if (left <= 0) return "overdue";
  return left < Math.max(AT_RISK_MIN_MS, (end - start) * AT_RISK_SHARE) ? "at_risk" : "ok";
}
