import type { Actor } from "../session";
import type { CaseStatus } from "../../../shared/domain/case-status";
import { conflict, forbidden, notFound } from "../../http/errors";
import { definePolicy } from "./policy";

/** The columns of a case that the rules look at. */
export interface CaseForPolicy {
  id: string;
  shopId: string;
  status: string;
  expertId: string | null;
}

/** Everything a user may do to a case. Sent with the case so the client only hides controls. */
export interface CaseAbilities {
  read: boolean;
  edit: boolean;
  addTrace: boolean;
  deleteTrace: boolean;
  addPhoto: boolean;
  deletePhoto: boolean;
}
export type CaseAction = Exclude<keyof CaseAbilities, "read">;

/** A technician or owner of the shop that owns the case. */
export function isShopMember(actor: Actor, c: Pick<CaseForPolicy, "shopId">): boolean {
  return (actor.role === "technician" || actor.role === "owner") && actor.shopId != null && actor.shopId === c.shopId;
}

/**
 * Who may see a case at all. The one place for read visibility: the queue may widen it (experts
 * seeing queued cases they match) by adding a clause here.
 * - technicians and owners: their own shop's cases, in every state;
 * - an expert: only a case they have claimed (expertId is theirs);
 * - admins: every case.
 */
export function canReadCase(actor: Actor, c: CaseForPolicy): boolean {
  if (actor.role === "admin") return true;
  if (isShopMember(actor, c)) return true;
  if (actor.role === "expert" && c.expertId != null && c.expertId === actor.id) return true;
  return false;
}

/**
 * The states in which the shop may still add material. After submission the expert can ask for
 * another capture (needs_data) or look at one during a live session (claimed).
 */
const addStates: readonly CaseStatus[] = ["draft", "claimed", "needs_data"];
const draftOnly: readonly CaseStatus[] = ["draft"];

const rules: Record<CaseAction, { who: (a: Actor, c: CaseForPolicy) => boolean; states: readonly CaseStatus[]; stateMessage: string }> = {
  edit: { who: isShopMember, states: draftOnly, stateMessage: "Only a draft can be edited; this case has been submitted." },
  addTrace: { who: isShopMember, states: addStates, stateMessage: "Traces can be added to a draft, or when the expert asks for more data." },
  deleteTrace: { who: isShopMember, states: draftOnly, stateMessage: "Traces can only be removed while the case is a draft." },
  addPhoto: { who: isShopMember, states: addStates, stateMessage: "Photos can be added to a draft, or when the expert asks for more data." },
  deletePhoto: { who: isShopMember, states: draftOnly, stateMessage: "Photos can only be removed while the case is a draft." },
};

function allowed(actor: Actor, c: CaseForPolicy, action: CaseAction): boolean {
  const r = rules[action];
  return r.who(actor, c) && r.states.includes(c.status as CaseStatus);
}

export function caseAbilities(actor: Actor, c: CaseForPolicy): CaseAbilities {
  const read = canReadCase(actor, c);
  return {
    read,
    edit: read && allowed(actor, c, "edit"),
    addTrace: read && allowed(actor, c, "addTrace"),
    deleteTrace: read && allowed(actor, c, "deleteTrace"),
    addPhoto: read && allowed(actor, c, "addPhoto"),
    deletePhoto: read && allowed(actor, c, "deletePhoto"),
  };
}

/** A missing case and one the actor may not see answer the same 404. */
export function assertCanReadCase<C extends CaseForPolicy>(actor: Actor, c: C | undefined | null, what = "Case"): asserts c is C {
  if (!c || !canReadCase(actor, c)) throw notFound(what);
}

/**
 * 404 when the case is not visible, 403 when the role may not do this, 409 when the case's state
 * does not allow it (e.g. editing a submitted case).
 */
export function assertCaseAction<C extends CaseForPolicy>(actor: Actor, c: C | undefined | null, action: CaseAction, what = "Case"): asserts c is C {
  assertCanReadCase(actor, c, what);
  const r = rules[action];
  if (!r.who(actor, c)) throw forbidden();
  if (!r.states.includes(c.status as CaseStatus)) throw conflict("case_locked", r.stateMessage, { status: c.status });
}

/** Only a shop's technicians and owners open cases, always for their own shop. */
export function assertCanCreateCase(actor: Actor): asserts actor is Actor & { shopId: string } {
  if (!(actor.role === "technician" || actor.role === "owner") || !actor.shopId) {
    throw forbidden("Only a shop's technicians and owners open cases.");
  }
}

/** Which cases a list shows the actor. */
export type CaseListScope = { kind: "shop"; shopId: string } | { kind: "expert"; expertId: string } | { kind: "all" } | { kind: "none" };

export function caseListScope(actor: Actor): CaseListScope {
  if ((actor.role === "technician" || actor.role === "owner") && actor.shopId) return { kind: "shop", shopId: actor.shopId };
  if (actor.role === "expert") return { kind: "expert", expertId: actor.id };
  if (actor.role === "admin") return { kind: "all" };
  return { kind: "none" };
}

/**
 * The same rules in the shared Policy form (server/auth/policies/policy.ts), for callers that use
 * that interface (e.g. socket handlers). `authorize` answers 404 / 403 only; routes that must tell
 * a state refusal (409) from a role refusal (403) call assertCaseAction instead.
 */
export const caseActions = ["read", "edit", "addTrace", "deleteTrace", "addPhoto", "deletePhoto"] as const;
export const casePolicy = definePolicy<(typeof caseActions)[number], CaseForPolicy>("Case", caseActions, (actor, action, c) => {
  if (!canReadCase(actor, c)) return "hide";
  if (action === "read") return "allow";
  return allowed(actor, c, action) ? "allow" : "forbid";
});
