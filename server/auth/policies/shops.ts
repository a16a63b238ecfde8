import { definePolicy, isShopMember } from "./policy";

/** A shop as the policy needs it. */
export interface ShopResource {
  id: string;
}

export const shopActions = ["view", "listMembers", "invite", "removeMember", "manageBilling"] as const;
export type ShopAction = (typeof shopActions)[number];

/**
 * Shops (tenants). Members see their own shop; the owner manages the team and billing. Admins see
 * any shop but do not manage teams. Everyone else is told the shop does not exist.
 */
export const shopPolicy = definePolicy<ShopAction, ShopResource>("Shop", shopActions, (actor, action, shop) => {
  if (actor.role === "admin") return action === "view" || action === "listMembers" ? "allow" : "forbid";
  if (!isShopMember(actor, shop.id)) return "hide";
  switch (action) {
    case "view":
    case "listMembers":
      return "allow";
    case "invite":
    case "removeMember":
    case "manageBilling":
      return actor.role === "owner" ? "allow" : "forbid";
  }
});
