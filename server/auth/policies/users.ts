import type { Role } from "../../../shared/domain/case-status";
import { definePolicy, isShopMember } from "./policy";

/** A user account as the policy needs it. */
export interface UserResource {
  id: string;
  role: Role;
  shopId: string | null;
  deactivatedAt?: Date | null;
}

export const userActions = ["view", "remove"] as const;
export type UserAction = (typeof userActions)[number];

/**
 * User accounts. Anyone sees themselves; shop members see their team; admins see everyone. An
 * owner removes technicians of their own shop (never themselves or another owner).
 */
export const userPolicy = definePolicy<UserAction, UserResource>("User", userActions, (actor, action, target) => {
  const self = actor.id === target.id;
  const sameShop = isShopMember(actor, target.shopId) && (target.role === "technician" || target.role === "owner");
  if (!self && !sameShop && actor.role !== "admin") return "hide";
  switch (action) {
    case "view":
      return "allow";
    case "remove":
      if (actor.role === "owner" && sameShop && !self && target.role === "technician" && !target.deactivatedAt)
        return "allow";
      return "forbid";
  }
});
