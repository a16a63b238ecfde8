/**
 * The action table through the one case policy: every action × every state × every role → allowed,
 * or the documented refusal. The expected answers are written out here from the rules as
 * docs/api.md states them ("Cases and traces", "Live review", "Queue and payments") and issues 5,
 * 12 and 15 — not derived from the table under test:
 *
 * - who sees a case (else 404, as for a missing one): its shop's technicians and owner in every
 *   state, the expert it is claimed by, admins; approved experts also see a queued case;
 * - a role that sees the case but may not do the action: 403; an action only approved experts or
 *   only admins take answers 403 to everyone else without looking at the case;
 * - a state the action does not start from: 409 with the action's code.
 */
import { describe, expect, it } from "vitest";
import type { Actor } from "../../../server/auth/session";
import { decide, type CaseFacts, type ExpertFacts } from "../../../server/workflow/policy";
import { caseStatuses, caseTransitions, type CaseAction, type CaseStatus } from "../../../shared/domain/case-status";

type Who = "techA" | "ownerA" | "techB" | "expertOnCase" | "otherExpert" | "pendingExpert" | "admin";

const actors: Record<Who, { actor: Actor; profile: ExpertFacts | null }> = {
  techA: { actor: { id: "t1", email: "t1@x.test", name: "T1", role: "technician", shopId: "A" }, profile: null },
  ownerA: { actor: { id: "o1", email: "o1@x.test", name: "O1", role: "owner", shopId: "A" }, profile: null },
  techB: { actor: { id: "t2", email: "t2@x.test", name: "T2", role: "technician", shopId: "B" }, profile: null },
  expertOnCase: {
    actor: { id: "e1", email: "e1@x.test", name: "E1", role: "expert", shopId: null },
    profile: { userId: "e1", status: "approved" },
  },
  otherExpert: {
    actor: { id: "e2", email: "e2@x.test", name: "E2", role: "expert", shopId: null },
    profile: { userId: "e2", status: "approved" },
  },
  pendingExpert: {
    actor: { id: "e3", email: "e3@x.test", name: "E3", role: "expert", shopId: null },
    profile: { userId: "e3", status: "pending" },
  },
  admin: { actor: { id: "a1", email: "a1@x.test", name: "A1", role: "admin", shopId: null }, profile: null },
};
const whos = Object.keys(actors) as Who[];

/** States in which a case has its expert (claimed, and what follows the claim). */
const WITH_EXPERT: CaseStatus[] = ["claimed", "needs_data", "answered", "resolved", "closed"];
const caseIn = (status: CaseStatus): CaseFacts => ({
  id: "c1",
  shopId: "A",
  status,
  expertId: WITH_EXPERT.includes(status) ? "e1" : null,
});

/** docs/api.md: who sees the case. */
function sees(who: Who, status: CaseStatus): boolean {
  if (who === "techA" || who === "ownerA" || who === "admin") return true;
  if (who === "expertOnCase") return WITH_EXPERT.includes(status) || status === "queued";
  if (who === "otherExpert") return status === "queued";
  return false;
}

const SHOP: Who[] = ["techA", "ownerA"];
const ALL: CaseStatus[] = [...caseStatuses];
const OPEN_FOR_WRITES: CaseStatus[] = ["draft", "awaiting_payment", "queued", "claimed", "needs_data", "answered"];

interface Rule {
  /** who may, among those who see the case ("assigned": the expert the case is claimed by) */
  may: (Who | "assigned")[];
  states: CaseStatus[];
  code: string;
  /** only approved experts / only admins: everyone else is refused (403) before the case is looked at */
  onlyFor?: "approvedExperts" | "admins";
}

/** The rules as docs/api.md and the issues state them. */
const rules: Partial<Record<CaseAction, Rule>> = {
  // Cases and traces: "Only a shop's technicians and owners create cases, edit drafts and add traces
  // or photos"; material "Allowed while the case is draft, claimed or needs_data"; removing "drafts only".
  edit: { may: SHOP, states: ["draft"], code: "case_locked" },
  addTrace: { may: SHOP, states: ["draft", "claimed", "needs_data"], code: "case_locked" },
  addPhoto: { may: SHOP, states: ["draft", "claimed", "needs_data"], code: "case_locked" },
  deleteTrace: { may: SHOP, states: ["draft"], code: "case_locked" },
  deletePhoto: { may: SHOP, states: ["draft"], code: "case_locked" },
  // Issue 13: a draft is deleted (not withdrawn) by its shop; anything submitted cannot be.
  deleteDraft: { may: SHOP, states: ["draft"], code: "case_locked" },
  // Live review: marks and chat by the shop members and the claimed expert while the case is not
  // resolved, closed, withdrawn or refunded; admins read only.
  annotate: { may: [...SHOP, "assigned"], states: OPEN_FOR_WRITES, code: "case_locked" },
  chat: { may: [...SHOP, "assigned"], states: OPEN_FOR_WRITES, code: "case_locked" },
  // Queue and payments.
  submit: { may: SHOP, states: ["draft", "awaiting_payment"], code: "invalid_transition" },
  withdraw: { may: SHOP, states: ["draft", "awaiting_payment", "queued"], code: "invalid_transition" },
  claim: {
    may: ["expertOnCase", "otherExpert"],
    states: ["queued"],
    code: "already_claimed",
    onlyFor: "approvedExperts",
  },
  release: { may: ["assigned", "admin"], states: ["claimed"], code: "invalid_transition" },
  reassign: { may: ["admin"], states: ["claimed", "needs_data"], code: "invalid_transition", onlyFor: "admins" },
  requestData: { may: ["assigned"], states: ["claimed", "needs_data"], code: "invalid_transition" },
  dataSent: { may: SHOP, states: ["needs_data"], code: "invalid_transition" },
  answer: { may: ["assigned"], states: ["claimed"], code: "invalid_transition" },
  confirm: { may: SHOP, states: ["answered"], code: "invalid_transition" },
  refund: {
    may: ["admin"],
    states: ["queued", "claimed", "needs_data", "answered", "resolved", "closed"],
    code: "not_refundable",
    onlyFor: "admins",
  },
  // Issue 12 item 6: a case's payment for the shop's members and admins, not experts.
  viewPayment: { may: [...SHOP, "admin"], states: ALL, code: "" },
  viewAnswers: { may: [...SHOP, "assigned", "admin"], states: ALL, code: "" },
};

function expected(action: CaseAction, who: Who, status: CaseStatus): { status: number; code?: string } {
  const r = rules[action]!;
  const c = caseIn(status);
  const assigned = who === "expertOnCase" && c.expertId === "e1";
  const approved = who === "expertOnCase" || who === "otherExpert";
  if (r.onlyFor === "approvedExperts" && !approved) return { status: 403, code: "forbidden" };
  if (r.onlyFor === "admins" && who !== "admin") return { status: 403, code: "forbidden" };
  // claim: approved experts know every case that has been paid for (a claim that lost answers 409)
  const seen =
    sees(who, status) || (action === "claim" && approved && status !== "draft" && status !== "awaiting_payment");
  if (!seen) return { status: 404, code: "not_found" };
  const allowedWho = r.may.includes(who) || (r.may.includes("assigned") && assigned);
  if (!allowedWho) return { status: 403, code: "forbidden" };
  if (!r.states.includes(status)) return { status: 409, code: r.code };
  return { status: 200 };
}

describe("the action table through the case policy", () => {
  for (const action of Object.keys(rules) as CaseAction[]) {
    it(`${action}: every state × every role`, () => {
      const table: string[] = [];
      const want: string[] = [];
      for (const status of caseStatuses) {
        for (const who of whos) {
          const { actor, profile } = actors[who];
          const d = decide(actor, profile, action, caseIn(status));
          table.push(`${status} ${who} → ${d.allowed ? 200 : `${d.refusal.status} ${d.refusal.code}`}`);
          const e = expected(action, who, status);
          want.push(`${status} ${who} → ${e.status === 200 ? 200 : `${e.status} ${e.code}`}`);
        }
      }
      expect(table).toEqual(want);
    });
  }

  it("refuses the desk's own moves (payment, sweeps) to every signed-in role", () => {
    const deskActions: CaseAction[] = [
      "pay",
      "paymentFails",
      "materialArrives",
      "widenOffers",
      "warnDeadline",
      "missDeadline",
      "holdEnds",
      "closeUnconfirmed",
    ];
    for (const action of deskActions) {
      for (const status of caseStatuses) {
        for (const who of whos) {
          const d = decide(actors[who].actor, actors[who].profile, action, caseIn(status));
          expect(d.allowed, `${action} ${status} ${who}`).toBe(false);
          if (!d.allowed) expect([403, 404]).toContain(d.refusal.status);
        }
      }
    }
  });

  it("answers 404 for a case that does not exist, to everyone", () => {
    for (const who of whos) {
      const d = decide(actors[who].actor, actors[who].profile, "withdraw", undefined);
      expect(d.allowed ? 200 : d.refusal.status).toBe(404);
    }
  });
});

describe("the moves between states", () => {
  it("are exactly the ones docs/api.md lists", () => {
    // docs/api.md "Case states": draft → awaiting_payment → queued → claimed ⇄ needs_data;
    // claimed → answered → resolved · claimed (not fixed, once) · closed; draft / awaiting_payment /
    // queued → withdrawn; queued / claimed / needs_data → refunded; claimed → queued (released).
    const documented: Record<CaseStatus, CaseStatus[]> = {
      draft: ["awaiting_payment", "withdrawn"],
      awaiting_payment: ["queued", "withdrawn"],
      queued: ["claimed", "withdrawn", "refunded"],
      claimed: ["needs_data", "answered", "queued", "refunded"],
      needs_data: ["claimed", "refunded"],
      answered: ["resolved", "claimed", "closed"],
      resolved: [],
      closed: [],
      withdrawn: [],
      refunded: [],
    };
    for (const s of caseStatuses) expect([...caseTransitions[s]].sort(), s).toEqual([...documented[s]].sort());
  });
});
