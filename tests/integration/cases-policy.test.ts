import { describe, expect, it } from "vitest";
import {
  assertCaseAction,
  caseAbilities,
  caseActions,
  caseListScope,
  casePolicy,
  type CaseForPolicy,
} from "../../server/auth/policies/cases";
import { tracePolicy } from "../../server/auth/policies/traces";
import type { Actor } from "../../server/auth/session";
import { caseStatuses } from "../../shared/domain/case-status";
import type { HttpError } from "../../server/http/errors";

/**
 * The case policy as a table (the product's rules, docs/api.md "Cases and traces"): the shop's
 * technicians and owners see their cases; the claimed expert and admins read; only the shop adds
 * material, and only in draft / claimed / needs_data; editing and removing only in draft.
 */
const tech: Actor = { id: "t1", email: "t@x.test", name: "T", role: "technician", shopId: "shopA" };
const owner: Actor = { id: "o1", email: "o@x.test", name: "O", role: "owner", shopId: "shopA" };
const otherTech: Actor = { id: "t2", email: "t2@x.test", name: "T2", role: "technician", shopId: "shopB" };
const expert: Actor = { id: "e1", email: "e@x.test", name: "E", role: "expert", shopId: null };
const admin: Actor = { id: "a1", email: "a@x.test", name: "A", role: "admin", shopId: null };
const caseIn = (status: string, expertId: string | null = null): CaseForPolicy => ({
  id: "c1",
  shopId: "shopA",
  status,
  expertId,
});

const statusOf = (fn: () => void): number | null => {
  try {
    fn();
    return null;
  } catch (e) {
    return (e as HttpError).status;
  }
};

describe("case policy", () => {
  it("agrees with itself: abilities, the Policy form and the assertions give the same answers in every state", () => {
    for (const status of caseStatuses) {
      for (const actor of [tech, owner, otherTech, expert, admin]) {
        const c = caseIn(status, status === "draft" ? null : "e1");
        const ab = caseAbilities(actor, c);
        for (const action of caseActions) {
          expect(casePolicy.can(actor, action, c), `${actor.role} ${action} ${status}`).toBe(ab[action]);
          if (action === "read") continue;
          const code = statusOf(() => assertCaseAction(actor, c, action));
          if (ab[action]) expect(code).toBeNull();
          else expect([403, 404, 409]).toContain(code);
        }
      }
    }
  });

  it("hides another shop's case and an unclaimed expert's view of it (404), never 403", () => {
    for (const action of ["edit", "addTrace", "deleteTrace", "addPhoto", "deletePhoto"] as const) {
      expect(statusOf(() => assertCaseAction(otherTech, caseIn("draft"), action))).toBe(404);
      expect(statusOf(() => assertCaseAction(expert, caseIn("queued"), action))).toBe(404);
    }
    expect(casePolicy.decide(otherTech, "read", caseIn("draft"))).toBe("hide");
    expect(tracePolicy.decide(expert, "download", caseIn("queued"))).toBe("hide");
  });

  it("tells a state refusal (409) from a role refusal (403)", () => {
    expect(statusOf(() => assertCaseAction(tech, caseIn("queued"), "edit"))).toBe(409);
    expect(statusOf(() => assertCaseAction(expert, caseIn("claimed", "e1"), "edit"))).toBe(403);
    expect(statusOf(() => assertCaseAction(admin, caseIn("draft"), "addTrace"))).toBe(403);
    expect(statusOf(() => assertCaseAction(owner, caseIn("needs_data", "e1"), "addTrace"))).toBeNull();
    expect(statusOf(() => assertCaseAction(owner, caseIn("needs_data", "e1"), "deleteTrace"))).toBe(409);
  });

  it("scopes lists to the shop, the expert's claimed cases, or everything for admins", () => {
    expect(caseListScope(tech)).toEqual({ kind: "shop", shopId: "shopA" });
    expect(caseListScope(expert)).toEqual({ kind: "expert", expertId: "e1" });
    expect(caseListScope(admin)).toEqual({ kind: "all" });
    expect(caseListScope({ ...tech, shopId: null })).toEqual({ kind: "none" });
  });
});
