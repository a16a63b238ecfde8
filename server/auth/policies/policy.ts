import type { Actor } from "../session";
import { forbidden, notFound } from "../../http/errors";

/**
 * A policy decides what an actor may do with one kind of resource. It is pure: no database, no
 * request, so routes, services and socket handlers all ask the same function.
 *
 * - "allow": go ahead
 * - "forbid": the actor may see the resource but their role may not do this → 403
 * - "hide": the resource belongs to another tenant (or is none of the actor's business) → 404,
 *   so its existence is not disclosed
 */
export type Decision = "allow" | "forbid" | "hide";

export interface Policy<A extends string, R> {
  readonly name: string;
  readonly actions: readonly A[];
  decide(actor: Actor, action: A, resource: R): Decision;
  /** true when `decide` allows */
  can(actor: Actor, action: A, resource: R): boolean;
  /** throws 404 (hide) or 403 (forbid) unless allowed */
  authorize(actor: Actor, action: A, resource: R): void;
  /** every action → can(); put into responses so the client only hides controls */
  abilities(actor: Actor, resource: R): Record<A, boolean>;
}

/**
 * @param name  what the resource is called in a 404 ("Shop not found.")
 */
export function definePolicy<A extends string, R>(
  name: string,
  actions: readonly A[],
  decide: (actor: Actor, action: A, resource: R) => Decision,
): Policy<A, R> {
  return {
    name,
    actions,
    decide,
    can: (actor, action, resource) => decide(actor, action, resource) === "allow",
    authorize(actor, action, resource) {
      const d = decide(actor, action, resource);
      if (d === "hide") throw notFound(name);
      if (d === "forbid") throw forbidden();
    },
    abilities(actor, resource) {
      const out = {} as Record<A, boolean>;
      for (const a of actions) out[a] = decide(actor, a, resource) === "allow";
      return out;
    },
  };
}

/** Technicians and owners belong to a shop (the tenant). */
export const isShopMember = (actor: Actor, shopId: string | null | undefined): boolean =>
  (actor.role === "technician" || actor.role === "owner") && !!actor.shopId && actor.shopId === shopId;
