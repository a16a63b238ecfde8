import type { ExpertStatus } from "../../../shared/schemas/auth";
import { definePolicy } from "./policy";

/** An expert's profile as the policy needs it; `null` for actions on the whole collection. */
export interface ExpertResource {
  userId: string;
  status: ExpertStatus;
}

export const expertActions = ["list", "view", "decide", "setAvailability"] as const;
export type ExpertAction = (typeof expertActions)[number];

/**
 * Expert profiles. The desk (admins) lists applications and approves or rejects them; an expert
 * sees their own profile and, once approved, sets themselves available or away.
 */
export const expertPolicy = definePolicy<ExpertAction, ExpertResource | null>(
  "Expert",
  expertActions,
  (actor, action, profile) => {
    if (actor.role === "admin") return action === "setAvailability" ? "forbid" : "allow";
    if (action === "list" || action === "decide") return "forbid";
    if (!profile || profile.userId !== actor.id) return actor.role === "expert" ? "hide" : "forbid";
    switch (action) {
      case "view":
        return "allow";
      case "setAvailability":
        return profile.status === "approved" ? "allow" : "forbid";
    }
  },
);
