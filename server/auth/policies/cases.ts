/**
 * The shop's material on a case (editing a draft, adding and removing captures and photos) in the
 * interface the case, trace and photo services use. The rules themselves are the action table's
 * (shared/domain/case-status.ts), asked through the one case policy (server/workflow/policy.ts):
 * this file only names them for these callers. Visibility here is the readers' (no queued-case
 * widening for experts): material is the shop's business.
 */
import type { Actor } from "../session";
import { forbidden } from "../../http/errors";
import { authorize, authorizeRead, can, canReadCase, isShopMember, type CaseFacts } from "../../workflow/policy";
import { definePolicy } from "./policy";

export type CaseForPolicy = CaseFacts;
export { canReadCase, isShopMember };

/** Everything a user may do to a case's material. Sent with the case so the client only hides controls. */
export interface CaseAbilities {
  read: boolean;
  edit: boolean;
  addTrace: boolean;
  deleteTrace: boolean;
  addPhoto: boolean;
  deletePhoto: boolean;
}
export type CaseAction = Exclude<keyof CaseAbilities, "read">;
const materialActions: readonly CaseAction[] = ["edit", "addTrace", "deleteTrace", "addPhoto", "deletePhoto"];

export function caseAbilities(actor: Actor, c: CaseForPolicy): CaseAbilities {
  const out = { read: canReadCase(actor, c) } as CaseAbilities;
  for (const a of materialActions) out[a] = can(actor, null, a, c);
  return out;
}

/** A missing case and one the actor may not see answer the same 404. */
export function assertCanReadCase<C extends CaseForPolicy>(
  actor: Actor,
  c: C | undefined | null,
  what = "Case",
): asserts c is C {
  authorizeRead(actor, c, what);
}

/** 404 when the case is not visible, 403 when the role may not do this, 409 `case_locked` in the wrong state. */
export function assertCaseAction<C extends CaseForPolicy>(
  actor: Actor,
  c: C | undefined | null,
  action: CaseAction,
  what = "Case",
): asserts c is C {
  authorize(actor, null, action, c, what);
}

/** Only a shop's technicians and owners open cases, always for their own shop. */
export function assertCanCreateCase(actor: Actor): asserts actor is Actor & { shopId: string } {
  if (!(actor.role === "technician" || actor.role === "owner") || !actor.shopId) {
    throw forbidden("Only a shop's technicians and owners open cases.");
  }
}

/** Which cases a list shows the actor. */
export type CaseListScope =
  { kind: "shop"; shopId: string } | { kind: "expert"; expertId: string } | { kind: "all" } | { kind: "none" };

export function caseListScope(actor: Actor): CaseListScope {
  if ((actor.role === "technician" || actor.role === "owner") && actor.shopId)
    return { kind: "shop", shopId: actor.shopId };
  if (actor.role === "expert") return { kind: "expert", expertId: actor.id };
  if (actor.role === "admin") return { kind: "all" };
  return { kind: "none" };
}

/** The same rules in the shared Policy form (404 / 403 only; assertCaseAction also tells 409). */
export const caseActions = ["read", ...materialActions] as const;
export const casePolicy = definePolicy<(typeof caseActions)[number], CaseForPolicy>(
  "Case",
  caseActions,
  (actor, action, c) => {
    if (!canReadCase(actor, c)) return "hide";
    if (action === "read") return "allow";
    return can(actor, null, action, c) ? "allow" : "forbid";
  },
);
