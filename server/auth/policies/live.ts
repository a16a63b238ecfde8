/**
 * Who may do what in a case's live review (socket events and their REST mirrors), asked of the one
 * case policy (server/workflow/policy.ts, from the action table):
 * - join / read the record: the case's readers (its shop's members, the expert who claimed it,
 *   admins);
 * - annotate and chat: the shop's members and the claimed expert while the case is open; admins
 *   watch but do not write;
 * - request more data: the claimed expert while the case is claimed or already waiting for data
 *   (the same rule as POST /api/cases/:id/request-data);
 * - change or remove a mark: its author only (while they may still annotate).
 */
import type { Actor } from "../session";
import { forbidden } from "../../http/errors";
import { authorize, authorizeRead, can, canReadCase, type CaseFacts } from "../../workflow/policy";
import type { LiveAbilities } from "../../../shared/realtime";

export function canJoinCase(actor: Actor, c: CaseFacts): boolean {
  return canReadCase(actor, c);
}

export function liveAbilities(actor: Actor, c: CaseFacts): LiveAbilities {
  return {
    annotate: can(actor, null, "annotate", c),
    chat: can(actor, null, "chat", c),
    requestData: can(actor, null, "requestData", c),
  };
}

/** 404 when the case is missing or not visible to the actor (same answer for both). */
export function assertCanJoinCase<C extends CaseFacts>(actor: Actor, c: C | null | undefined): asserts c is C {
  authorizeRead(actor, c);
}

export type LiveWrite = "annotate" | "chat" | "requestData";

/** 404 when not visible, 403 for a role that may not write, 409 when the case's state does not allow it. */
export function assertLiveWrite<C extends CaseFacts>(
  actor: Actor,
  c: C | null | undefined,
  what: LiveWrite,
): asserts c is C {
  authorize(actor, null, what, c);
}

/** An author changes or removes only their own marks. */
export function assertOwnAnnotation(actor: Actor, a: { authorId: string | null }): void {
  if (a.authorId !== actor.id) throw forbidden("Only the author of a mark changes or removes it.");
}
