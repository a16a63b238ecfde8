import type { Actor } from "../session";
import { assertCanReadCase, assertCaseAction, caseAbilities, type CaseForPolicy } from "./cases";
import { definePolicy } from "./policy";
import { casebookPolicy, type CasebookEntryForPolicy } from "./casebook";
import { canViewCase, type ExpertFacts } from "../../workflow/policy";

/** A trace (and a photo) belongs to its case: whoever may see the case may see it. */
export interface TraceAbilities {
  read: boolean;
  delete: boolean;
  download: boolean;
}

export function traceAbilities(actor: Actor, c: CaseForPolicy): TraceAbilities {
  const a = caseAbilities(actor, c);
  return { read: a.read, delete: a.deleteTrace, download: a.read };
}

/** 404 for a trace whose case the actor may not see (or a missing one). */
export function assertCanReadTrace<C extends CaseForPolicy>(actor: Actor, c: C | undefined | null): asserts c is C {
  assertCanReadCase(actor, c, "Trace");
}

export function assertCanDeleteTrace<C extends CaseForPolicy>(actor: Actor, c: C | undefined | null): asserts c is C {
  assertCaseAction(actor, c, "deleteTrace", "Trace");
}

export function assertCanAddTrace<C extends CaseForPolicy>(actor: Actor, c: C | undefined | null): asserts c is C {
  assertCaseAction(actor, c, "addTrace");
}

/** Trace rules in the shared Policy form; the resource is the trace's case. */
export const traceActions = ["read", "download", "delete"] as const;
export const tracePolicy = definePolicy<(typeof traceActions)[number], CaseForPolicy>(
  "Trace",
  traceActions,
  (actor, action, c) => {
    const a = traceAbilities(actor, c);
    if (!a.read) return "hide";
    return a[action] ? "allow" : "forbid";
  },
);

/**
 * A trace's min/max window (what the trace viewer plots): whoever may view its case (readers, and
 * approved experts on a queued case), or any reader of the casebook entry the trace was published
 * with. `entry` is that entry when the trace is among its published traces, else null.
 */
export function mayReadTraceWindow(
  actor: Actor,
  profile: ExpertFacts | null,
  c: CaseForPolicy | null | undefined,
  entry: CasebookEntryForPolicy | null,
): boolean {
  if (c && canViewCase(actor, profile, c)) return true;
  return entry !== null && casebookPolicy.can(actor, "read", entry);
}
