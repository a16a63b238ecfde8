/**
 * Who may do what in the paid queue. Responses carry `queueAbilities(...)` so the client only hides
 * controls; the routes call `assertQueueAction`, which answers 404 for a case the actor may not see,
 * 403 for a wrong role and 409 for a state that does not allow the action.
 */
import { eq } from "drizzle-orm";
import type { Actor } from "../session";
import { schema } from "../../db/client";
import type { Db } from "../../db/client";
import { canReadCase, isShopMember, type CaseForPolicy } from "./cases";
import { conflict, forbidden, notFound } from "../../http/errors";
import type { CaseStatus } from "../../../shared/domain/case-status";

export type ExpertProfileRow = typeof schema.expertProfile.$inferSelect;
type DbLike = Pick<Db, "select">;

/** The actor's expert profile (experts only), for the rules below. */
export function expertProfileOf(db: DbLike, actor: Actor): ExpertProfileRow | null {
  if (actor.role !== "expert") return null;
  return db.select().from(schema.expertProfile).where(eq(schema.expertProfile.userId, actor.id)).get() ?? null;
}

export function isApprovedExpert(actor: Actor, profile: ExpertProfileRow | null): boolean {
  return actor.role === "expert" && profile?.userId === actor.id && profile.status === "approved";
}

/**
 * An approved expert may see the summary of any case waiting in the queue (offered to them or not),
 * so they can choose what to claim. For the cases read policy: OR this into canReadCase.
 */
export function canExpertSeeQueuedCase(actor: Actor, c: Pick<CaseForPolicy, "status">, profile: ExpertProfileRow | null): boolean {
  return isApprovedExpert(actor, profile) && c.status === "queued";
}

/** The queue page: approved experts, and admins (who watch it). */
export function canSeeQueue(actor: Actor, profile: ExpertProfileRow | null): boolean {
  return actor.role === "admin" || isApprovedExpert(actor, profile);
}

export function assertCanSeeQueue(actor: Actor, profile: ExpertProfileRow | null): void {
  if (canSeeQueue(actor, profile)) return;
  if (actor.role === "expert") throw forbidden("Your expert profile is not approved yet; the queue opens once the desk approves it.");
  throw forbidden("The queue is for the desk's experts.");
}

export function canSeeCaseInQueueArea(actor: Actor, c: CaseForPolicy, profile: ExpertProfileRow | null): boolean {
  return canReadCase(actor, c) || canExpertSeeQueuedCase(actor, c, profile);
}

/**
 * Read access for the case page and its traces: everyone canReadCase allows, plus approved experts
 * looking at a queued case before they claim it. Anyone else gets 404, as for a missing case.
 */
export function assertCanViewCase<C extends CaseForPolicy>(db: DbLike, actor: Actor, c: C | undefined | null, what = "Case"): asserts c is C {
  if (!c || !canSeeCaseInQueueArea(actor, c, expertProfileOf(db, actor))) throw notFound(what);
}

const isAssignedExpert = (a: Actor, c: CaseForPolicy) => a.role === "expert" && c.expertId != null && c.expertId === a.id;

export type QueueAction = "submit" | "withdraw" | "claim" | "release" | "requestData" | "dataSent" | "answer" | "confirm" | "refund";

const rules: Record<QueueAction, { who: (a: Actor, c: CaseForPolicy, p: ExpertProfileRow | null) => boolean; states: readonly CaseStatus[]; stateMessage: string; roleMessage: string }> = {
  submit: {
    who: isShopMember,
    states: ["draft", "awaiting_payment"],
    stateMessage: "This case has already been paid for and submitted.",
    roleMessage: "Only the shop's technicians and owner submit its cases.",
  },
  withdraw: {
    who: isShopMember,
    states: ["draft", "awaiting_payment", "queued"],
    stateMessage: "An expert is already working on this case, so it can no longer be withdrawn.",
    roleMessage: "Only the shop's technicians and owner withdraw its cases.",
  },
  claim: {
    who: (a, _c, p) => isApprovedExpert(a, p),
    states: ["queued"],
    stateMessage: "This case is no longer in the queue; another expert claimed it first.",
    roleMessage: "Only approved experts claim cases.",
  },
  release: {
    who: (a, c) => isAssignedExpert(a, c) || a.role === "admin",
    states: ["claimed"],
    stateMessage: "Only a claimed case can be released back to the queue.",
    roleMessage: "Only the expert working on this case can release it.",
  },
  requestData: {
    who: isAssignedExpert,
    states: ["claimed"],
    stateMessage: "More data can be asked for while you are working on the case.",
    roleMessage: "Only the expert working on this case can ask for more data.",
  },
  dataSent: {
    who: isShopMember,
    states: ["needs_data"],
    stateMessage: "The expert has not asked for more data.",
    roleMessage: "Only the shop answers a request for more data.",
  },
  answer: {
    who: isAssignedExpert,
    states: ["claimed"],
    stateMessage: "An answer can be written while the case is claimed by you (not while waiting for data, nor after answering).",
    roleMessage: "Only the expert working on this case can answer it.",
  },
  confirm: {
    who: isShopMember,
    states: ["answered"],
    stateMessage: "There is no answer waiting for confirmation on this case.",
    roleMessage: "Only the shop confirms whether the fix worked.",
  },
  refund: {
    who: (a) => a.role === "admin",
    states: ["queued", "claimed", "needs_data", "answered", "resolved", "closed"],
    stateMessage: "There is no payment on this case to refund.",
    roleMessage: "Only the desk's admins refund payments.",
  },
};

export type QueueAbilities = Record<QueueAction, boolean> & { read: boolean; history: boolean };

export function queueAbilities(actor: Actor, c: CaseForPolicy, profile: ExpertProfileRow | null): QueueAbilities {
  const read = canSeeCaseInQueueArea(actor, c, profile);
  const out = { read, history: read } as QueueAbilities;
  for (const k of Object.keys(rules) as QueueAction[]) {
    const r = rules[k];
    out[k] = read && r.who(actor, c, profile) && r.states.includes(c.status as CaseStatus);
  }
  return out;
}

export function assertCanSeeCase<C extends CaseForPolicy>(actor: Actor, c: C | null | undefined, profile: ExpertProfileRow | null): asserts c is C {
  if (!c || !canSeeCaseInQueueArea(actor, c, profile)) throw notFound("Case");
}

/** 404 not visible · 403 wrong role · 409 wrong state (`invalid_transition`, `already_claimed` for claims). */
export function assertQueueAction<C extends CaseForPolicy>(actor: Actor, c: C | null | undefined, profile: ExpertProfileRow | null, action: QueueAction): asserts c is C {
  assertCanSeeCase(actor, c, profile);
  const r = rules[action];
  if (!r.who(actor, c, profile)) throw forbidden(r.roleMessage);
  if (!r.states.includes(c.status as CaseStatus)) {
    const code = action === "claim" && (c.status === "claimed" || c.status === "needs_data") ? "already_claimed" : "invalid_transition";
    throw conflict(code, r.stateMessage, { status: c.status });
  }
}
