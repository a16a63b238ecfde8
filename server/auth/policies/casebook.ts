import { definePolicy } from "./policy";

/** A casebook entry as the rules see it. */
export interface CasebookEntryForPolicy {
  hidden: boolean;
  /** the expert whose answer it was (never sent to readers) */
  expertId: string | null;
}

export const casebookActions = ["read", "vote", "moderate"] as const;
export type CasebookAction = (typeof casebookActions)[number];

/**
 * The casebook is for everybody signed in: technicians, owners, experts and the desk read and
 * search it. A hidden entry is the desk's business only (404 for everyone else). Anybody who reads
 * an entry may mark it helpful, except the desk (staff do not rate the content they moderate) and
 * the expert who wrote it. Only admins hide, unhide and edit entries.
 */
export const casebookPolicy = definePolicy<CasebookAction, CasebookEntryForPolicy>(
  "Casebook entry",
  casebookActions,
  (actor, action, e) => {
    const admin = actor.role === "admin";
    if (e.hidden && !admin) return "hide";
    switch (action) {
      case "read":
        return "allow";
      case "vote":
        if (admin) return "forbid";
        if (e.expertId != null && e.expertId === actor.id) return "forbid";
        return "allow";
      case "moderate":
        return admin ? "allow" : "forbid";
    }
  },
);
