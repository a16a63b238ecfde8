/** Extension point: functions run after a case is resolved and published to the casebook. */
import type { AppContext } from "../context";

export type CaseResolvedHook = (ctx: AppContext, caseId: string) => Promise<void> | void;

/** Run after the casebook publication of a resolved case (tests and future integrations push here). */
export const onCaseResolved: CaseResolvedHook[] = [];
