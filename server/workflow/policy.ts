/**
 * The one case policy, derived from the action table (shared/domain/case-status.ts `caseActions`).
 * Pure: it reads the actor, the actor's expert profile (loaded beforehand; null for everyone else)
 * and the case's columns, never the database. Every workflow question is asked here: routes,
 * commands, the live layer and the presenters' `abilities`.
 *
 * A refusal is decided in this order:
 *   1. 403 `forbidden` — for an action whose `who` does not depend on the case (approved experts,
 *      admins, the desk), an actor who is none of them: the answer says nothing about the case;
 *   2. 404 `not_found` — the case is missing, or the actor may not see it (another shop's case, an
 *      expert's case they have not claimed); its existence is not disclosed;
 *   3. 403 `forbidden` — the actor sees the case but their relation to it is not among the
 *      action's `who`;
 *   4. 409 (the action's `code`) — the case is not in a state the action starts from.
 */
import type { Actor } from "../auth/session";
import { HttpError } from "../http/errors";
import {
  caseActions,
  type CaseAction,
  type CaseActionSpec,
  type CaseRelation,
  type CaseStatus,
} from "../../shared/domain/case-status";

/** The columns of a case the rules look at. */
export interface CaseFacts {
  id: string;
  shopId: string;
  status: string;
  expertId: string | null;
}

/** The actor's expert profile as the rules need it (null for non-experts, or an expert without one). */
export interface ExpertFacts {
  userId: string;
  status: string;
}

export interface Refusal {
  status: 403 | 404 | 409;
  code: string;
  message: string;
}

export type Decision = { allowed: true } | { allowed: false; refusal: Refusal };

const spec = (action: CaseAction): CaseActionSpec => caseActions[action];

/** Relations that depend on the case (the others are the actor's alone). */
const CASE_DEPENDENT = new Set<CaseRelation>(["shop", "assignedExpert"]);
const holdsAlone = (w: CaseRelation, actor: Actor, profile: ExpertFacts | null): boolean =>
  (w === "approvedExpert" && isApprovedExpert(actor, profile)) || (w === "admin" && actor.role === "admin");

export const isShopMember = (actor: Actor, c: Pick<CaseFacts, "shopId">): boolean =>
  (actor.role === "technician" || actor.role === "owner") && actor.shopId != null && actor.shopId === c.shopId;

export const isApprovedExpert = (actor: Actor, profile: ExpertFacts | null): boolean =>
  actor.role === "expert" && profile?.userId === actor.id && profile.status === "approved";

const isAssignedExpert = (actor: Actor, c: CaseFacts): boolean =>
  actor.role === "expert" && c.expertId != null && c.expertId === actor.id;

/** How the actor stands to the case. */
export function relationsOf(actor: Actor, profile: ExpertFacts | null, c: CaseFacts): Set<CaseRelation> {
  const out = new Set<CaseRelation>();
  if (isShopMember(actor, c)) out.add("shop");
  if (isAssignedExpert(actor, c)) out.add("assignedExpert");
  if (isApprovedExpert(actor, profile)) out.add("approvedExpert");
  if (actor.role === "admin") out.add("admin");
  return out;
}

/**
 * Who reads a case and takes part in it: its shop's technicians and owner (every state), the expert
 * it is claimed by, and admins. The live review's room is open to exactly these.
 */
export function canReadCase(actor: Actor, c: CaseFacts): boolean {
  return actor.role === "admin" || isShopMember(actor, c) || isAssignedExpert(actor, c);
}

/** The readers, plus approved experts looking at a queued case before they claim it. */
export function canViewCase(actor: Actor, profile: ExpertFacts | null, c: CaseFacts): boolean {
  return canReadCase(actor, c) || (isApprovedExpert(actor, profile) && c.status === "queued");
}

/** The queue page: approved experts, and admins (who watch it). */
export function canSeeQueue(actor: Actor, profile: ExpertFacts | null): boolean {
  return actor.role === "admin" || isApprovedExpert(actor, profile);
}

function visibleFor(action: CaseAction, actor: Actor, profile: ExpertFacts | null, c: CaseFacts): boolean {
  if (canViewCase(actor, profile, c)) return true;
  const paid = c.status !== "draft" && c.status !== "awaiting_payment";
  return !!spec(action).revealsPaidCasesToApprovedExperts && paid && isApprovedExpert(actor, profile);
}

function stateMessage(action: CaseAction, actor: Actor, c: CaseFacts): string {
  if (action === "claim") {
    if (c.expertId === actor.id) return "You have already claimed this case.";
    if (c.expertId == null) return "This case is no longer in the queue.";
  }
  return spec(action).stateMessage || `This case is ${c.status}; that cannot be done now.`;
}

/** May the actor do `action` to the case, and if not, which refusal? */
export function decide(
  actor: Actor,
  profile: ExpertFacts | null,
  action: CaseAction,
  c: CaseFacts | null | undefined,
  what = "Case",
): Decision {
  const s = spec(action);
  const forbid: Decision = {
    allowed: false,
    refusal: { status: 403, code: "forbidden", message: s.roleMessage || "Your role does not allow this." },
  };
  if (s.who.every((w) => !CASE_DEPENDENT.has(w)) && !s.who.some((w) => holdsAlone(w, actor, profile))) return forbid;
  if (!c || !visibleFor(action, actor, profile, c))
    return { allowed: false, refusal: { status: 404, code: "not_found", message: `${what} not found.` } };
  const rel = relationsOf(actor, profile, c);
  if (!s.who.some((w) => rel.has(w))) return forbid;
  if (!(c.status in s.moves))
    return { allowed: false, refusal: { status: 409, code: s.code, message: stateMessage(action, actor, c) } };
  return { allowed: true };
}

export function can(actor: Actor, profile: ExpertFacts | null, action: CaseAction, c: CaseFacts): boolean {
  return decide(actor, profile, action, c).allowed;
}

/** Throws the refusal as an HttpError (404 / 403 / 409) unless the action is allowed. */
export function authorize<C extends CaseFacts>(
  actor: Actor,
  profile: ExpertFacts | null,
  action: CaseAction,
  c: C | null | undefined,
  what = "Case",
): asserts c is C {
  const d = decide(actor, profile, action, c, what);
  if (!d.allowed) {
    const { status, code, message } = d.refusal;
    throw new HttpError(status, code, message, status === 409 ? { status: c!.status } : undefined);
  }
}

/** 404 unless the actor may see the case (readers, and approved experts on a queued case). */
export function authorizeView<C extends CaseFacts>(
  actor: Actor,
  profile: ExpertFacts | null,
  c: C | null | undefined,
  what = "Case",
): asserts c is C {
  if (!c || !canViewCase(actor, profile, c)) throw new HttpError(404, "not_found", `${what} not found.`);
}

/** 404 unless the actor reads the case (no queued-case widening: the live room, the case list). */
export function authorizeRead<C extends CaseFacts>(
  actor: Actor,
  c: C | null | undefined,
  what = "Case",
): asserts c is C {
  if (!c || !canReadCase(actor, c)) throw new HttpError(404, "not_found", `${what} not found.`);
}

/** Each action → allowed, for the actor on this case (sent with responses; the client only hides controls). */
export function abilitiesFor<A extends CaseAction>(
  actor: Actor,
  profile: ExpertFacts | null,
  c: CaseFacts,
  actions: readonly A[],
): Record<A, boolean> {
  const out = {} as Record<A, boolean>;
  for (const a of actions) out[a] = can(actor, profile, a, c);
  return out;
}

/** Is the case in a state where `action` leads to `to`? (Commands pick among an action's outcomes.) */
export function leadsTo(action: CaseAction, from: CaseStatus, to: CaseStatus): boolean {
  return (spec(action).moves[from] ?? []).includes(to);
}
