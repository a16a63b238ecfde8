/**
 * Who may do what in a case's live review (socket events and their REST mirrors). Pure: the
 * socket layer calls these on every event with the actor and case row read fresh.
 *
 * - join / read the record: whoever may read the case (its shop's members, the expert who claimed
 *   it, admins) — server/auth/policies/cases.ts canReadCase;
 * - annotate and chat: the shop's members and the claimed expert, while the case is open;
 *   admins watch but do not write;
 * - request more data: the claimed expert, while the case is claimed or already waiting for data;
 * - change or remove a mark: its author only (while they may still annotate).
 */
import type { Actor } from "../session";
import { canReadCase, isShopMember, type CaseForPolicy } from "./cases";
import { forbidden, conflict, notFound } from "../../http/errors";
import type { CaseStatus } from "../../../shared/domain/case-status";
import type { LiveAbilities } from "../../../shared/realtime";

/** States in which nothing more is said or marked on a case. */
export const closedStates: readonly CaseStatus[] = ["resolved", "closed", "withdrawn", "refunded"];
const requestStates: readonly CaseStatus[] = ["claimed", "needs_data"];

const isClaimedExpert = (a: Actor, c: CaseForPolicy) => a.role === "expert" && c.expertId != null && c.expertId === a.id;
const isParticipant = (a: Actor, c: CaseForPolicy) => isShopMember(a, c) || isClaimedExpert(a, c);
const isOpen = (c: CaseForPolicy) => !closedStates.includes(c.status as CaseStatus);

export function canJoinCase(actor: Actor, c: CaseForPolicy): boolean {
  return canReadCase(actor, c);
}

export function liveAbilities(actor: Actor, c: CaseForPolicy): LiveAbilities {
  const read = canReadCase(actor, c);
  const write = read && isParticipant(actor, c) && isOpen(c);
  return {
    annotate: write,
    chat: write,
    requestData: write && isClaimedExpert(actor, c) && requestStates.includes(c.status as CaseStatus),
  };
}

/** 404 when the case is missing or not visible to the actor (same answer for both). */
export function assertCanJoinCase<C extends CaseForPolicy>(actor: Actor, c: C | null | undefined): asserts c is C {
  if (!c || !canJoinCase(actor, c)) throw notFound("Case");
}

export type LiveWrite = "annotate" | "chat" | "requestData";

/** 404 when not visible, 403 for a role that may not write, 409 when the case is closed or not in a state for it. */
export function assertLiveWrite<C extends CaseForPolicy>(actor: Actor, c: C | null | undefined, what: LiveWrite): asserts c is C {
  assertCanJoinCase(actor, c);
  if (what === "requestData") {
    if (!isClaimedExpert(actor, c)) throw forbidden("Only the expert who claimed the case asks for more data.");
    if (!requestStates.includes(c.status as CaseStatus)) throw conflict("case_locked", "More data can be asked for while the case is claimed.", { status: c.status });
    return;
  }
  if (!isParticipant(actor, c)) throw forbidden("Only the shop and the expert on the case write in it.");
  if (!isOpen(c)) throw conflict("case_locked", "This case is finished; its marks and chat are read-only now.", { status: c.status });
}

/** An author changes or removes only their own marks. */
export function assertOwnAnnotation(actor: Actor, a: { authorId: string | null }): void {
  if (a.authorId !== actor.id) throw forbidden("Only the author of a mark changes or removes it.");
}
