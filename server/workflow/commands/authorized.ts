/** The first step of every command: load the case and the actor's expert profile, ask the policy. */
import type { Actor } from "../../auth/session";
import type { Tx } from "../../db/client";
import type { CaseAction } from "../../../shared/domain/case-status";
import { authorize } from "../policy";
import { expertProfileOf, getCaseRow, type CaseRow, type ExpertProfileRow } from "../records";

export async function authorized(
  tx: Tx,
  actor: Actor,
  action: CaseAction,
  caseId: string,
): Promise<{ c: CaseRow; profile: ExpertProfileRow | null }> {
  const c = await getCaseRow(tx, caseId);
  const profile = await expertProfileOf(tx, actor);
  authorize(actor, profile, action, c);
  return { c, profile };
}
