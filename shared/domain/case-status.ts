/**
 * A case's states and the one table of what can be done to a case: every action with the states it
 * starts from and the states it leads to, who may do it, the code a refusal in the wrong state
 * answers, and the notices it sends. The allowed moves between states are derived from it; the
 * server's case policy (server/workflow/policy.ts) is derived from it too, and docs/api.md
 * ("Queue and payments") lists it for readers.
 */
export const caseStatuses = [
  "draft",
  "awaiting_payment",
  "queued",
  "claimed",
  "needs_data",
  "answered",
  "resolved",
  "closed",
  "withdrawn",
  "refunded",
] as const;
export type CaseStatus = (typeof caseStatuses)[number];

/** How a state is named in sentences ("This case is {label}"). */
export const caseStatusWords: Readonly<Record<CaseStatus, string>> = {
  draft: "a draft",
  awaiting_payment: "awaiting payment",
  queued: "in the queue",
  claimed: "claimed by an expert",
  needs_data: "waiting for more data",
  answered: "answered",
  resolved: "resolved",
  closed: "closed",
  withdrawn: "withdrawn",
  refunded: "refunded",
};

export const roles = ["technician", "owner", "expert", "admin"] as const;
export type Role = (typeof roles)[number];

export const systems = [
  "ignition",
  "fuel",
  "starting-charging",
  "sensors",
  "networks",
  "engine-mechanical",
  "other",
] as const;
export type VehicleSystem = (typeof systems)[number];

/**
 * Who an action is for, relative to the case:
 * - `shop`: a technician or the owner of the shop that opened the case;
 * - `assignedExpert`: the expert the case is claimed by (or reassigned to);
 * - `approvedExpert`: any expert whose profile the desk has approved;
 * - `admin`: the desk's staff;
 * - `desk`: the desk itself (payment webhooks, timed sweeps) — never a signed-in user.
 */
export type CaseRelation = "shop" | "assignedExpert" | "approvedExpert" | "admin" | "desk";

/** The in-app notices (also mailed unless the catalogue says otherwise). */
export type NoticeKind =
  | "case_offered"
  | "case_claimed"
  | "case_released"
  | "case_reassigned"
  | "data_requested"
  | "data_sent"
  | "case_answered"
  | "not_fixed"
  | "case_resolved"
  | "case_closed"
  | "deadline_near"
  | "deadline_missed"
  | "payment_authorized"
  | "payment_failed"
  | "payment_released"
  | "receipt"
  | "refund"
  | "payout"
  | "case_withdrawn"
  | "new_message"
  | "new_mark";

export interface CaseActionSpec {
  /** state it may start from → the states it may lead to (the same state: nothing moves) */
  moves: Moves;
  who: readonly CaseRelation[];
  /** the 409's code when the case is in a state the action does not start from */
  code: "invalid_transition" | "already_claimed" | "case_locked" | "not_refundable";
  stateMessage: string;
  roleMessage: string;
  /** notices the action sends (after the commit) */
  notices: readonly NoticeKind[];
  /** other refusals the action can answer, checked by its command (documentation) */
  otherCodes?: readonly string[];
  /** approved experts know a paid case exists for this action even when they may not open it */
  revealsPaidCasesToApprovedExperts?: boolean;
}

type Moves = Partial<Record<CaseStatus, readonly CaseStatus[]>>;
/** every state of `from` leads to `dest` */
const to = (from: readonly CaseStatus[], dest: CaseStatus | readonly CaseStatus[]): Moves =>
  Object.fromEntries(from.map((s) => [s, typeof dest === "string" ? [dest] : dest]));
/** allowed in these states; the state does not change */
const stay = (states: readonly CaseStatus[]): Moves => Object.fromEntries(states.map((s) => [s, [s]]));

const OPEN: readonly CaseStatus[] = ["draft", "awaiting_payment", "queued", "claimed", "needs_data", "answered"];
const HELD: readonly CaseStatus[] = ["queued", "claimed", "needs_data"];
const ADD_MATERIAL: readonly CaseStatus[] = ["draft", "claimed", "needs_data"];

/** The one table. Actions by people first, then the desk's own. */
export const caseActions = {
  // --- the shop's material (no change of state) ---
  edit: {
    moves: stay(["draft"]),
    who: ["shop"],
    code: "case_locked",
    stateMessage: "Only a draft can be edited; this case has been submitted.",
    roleMessage: "Only the shop's technicians and owner edit its cases.",
    notices: [],
  },
  addTrace: {
    moves: stay(ADD_MATERIAL),
    who: ["shop"],
    code: "case_locked",
    stateMessage: "Traces can be added to a draft, or when the expert asks for more data.",
    roleMessage: "Only the shop's technicians and owner add captures.",
    notices: [],
  },
  deleteTrace: {
    moves: stay(["draft"]),
    who: ["shop"],
    code: "case_locked",
    stateMessage: "Traces can only be removed while the case is a draft.",
    roleMessage: "Only the shop's technicians and owner remove captures.",
    notices: [],
  },
  addPhoto: {
    moves: stay(ADD_MATERIAL),
    who: ["shop"],
    code: "case_locked",
    stateMessage: "Photos can be added to a draft, or when the expert asks for more data.",
    roleMessage: "Only the shop's technicians and owner add photos.",
    notices: [],
  },
  deleteDraft: {
    moves: stay(["draft"]),
    who: ["shop"],
    code: "case_locked",
    stateMessage: "Only a draft can be deleted; a submitted case can be withdrawn before an expert takes it.",
    roleMessage: "Only the shop's technicians and owner delete its drafts.",
    notices: [],
  },
  deletePhoto: {
    moves: stay(["draft"]),
    who: ["shop"],
    code: "case_locked",
    stateMessage: "Photos can only be removed while the case is a draft.",
    roleMessage: "Only the shop's technicians and owner remove photos.",
    notices: [],
  },
  // --- live review (marks and chat) ---
  annotate: {
    moves: stay(OPEN),
    who: ["shop", "assignedExpert"],
    code: "case_locked",
    stateMessage: "This case is finished; its marks and chat are read-only now.",
    roleMessage: "Only the shop and the expert on the case write in it.",
    notices: ["new_mark"],
  },
  chat: {
    moves: stay(OPEN),
    who: ["shop", "assignedExpert"],
    code: "case_locked",
    stateMessage: "This case is finished; its marks and chat are read-only now.",
    roleMessage: "Only the shop and the expert on the case write in it.",
    notices: ["new_message"],
  },
  // --- reading what only some readers see ---
  viewPayment: {
    moves: stay(caseStatuses),
    who: ["shop", "admin"],
    code: "invalid_transition",
    stateMessage: "",
    roleMessage: "A case's payment is for the shop and the desk.",
    notices: [],
  },
  viewAnswers: {
    moves: stay(caseStatuses),
    who: ["shop", "assignedExpert", "admin"],
    code: "invalid_transition",
    stateMessage: "",
    roleMessage: "Answers are for the shop and the expert on the case.",
    notices: [],
  },
  // --- the paid workflow ---
  submit: {
    moves: { draft: ["awaiting_payment"], awaiting_payment: ["awaiting_payment"] },
    who: ["shop"],
    code: "invalid_transition",
    stateMessage: "This case has already been paid for and submitted.",
    roleMessage: "Only the shop's technicians and owner submit its cases.",
    notices: [],
    otherCodes: ["case_incomplete", "checkout_in_progress", "unknown_tier", "payment_unavailable"],
  },
  withdraw: {
    moves: to(["draft", "awaiting_payment", "queued"], "withdrawn"),
    who: ["shop"],
    code: "invalid_transition",
    stateMessage: "An expert is already working on this case, so it can no longer be withdrawn.",
    roleMessage: "Only the shop's technicians and owner withdraw its cases.",
    notices: ["case_withdrawn", "payment_released"],
  },
  claim: {
    moves: to(["queued"], "claimed"),
    who: ["approvedExpert"],
    code: "already_claimed",
    stateMessage: "Another expert claimed this case first.",
    roleMessage: "Only approved experts claim cases.",
    notices: ["case_claimed"],
    otherCodes: ["load_limit"],
    revealsPaidCasesToApprovedExperts: true,
  },
  release: {
    moves: to(["claimed"], "queued"),
    who: ["assignedExpert", "admin"],
    code: "invalid_transition",
    stateMessage: "Only a claimed case can be released back to the queue.",
    roleMessage: "Only the expert working on this case can release it.",
    notices: ["case_released"],
  },
  reassign: {
    moves: stay(["claimed", "needs_data"]),
    who: ["admin"],
    code: "invalid_transition",
    stateMessage: "Only a case an expert is working on can be handed to another expert.",
    roleMessage: "Only the desk's admins reassign cases.",
    notices: ["case_reassigned"],
    otherCodes: ["expert_unavailable"],
  },
  requestData: {
    moves: to(["claimed", "needs_data"], "needs_data"),
    who: ["assignedExpert"],
    code: "invalid_transition",
    stateMessage: "More data can be asked for while you are working on the case.",
    roleMessage: "Only the expert working on this case can ask for more data.",
    notices: ["data_requested"],
  },
  dataSent: {
    moves: to(["needs_data"], "claimed"),
    who: ["shop"],
    code: "invalid_transition",
    stateMessage: "The expert has not asked for more data.",
    roleMessage: "Only the shop answers a request for more data.",
    notices: ["data_sent"],
  },
  answer: {
    moves: to(["claimed"], "answered"),
    who: ["assignedExpert"],
    code: "invalid_transition",
    stateMessage:
      "An answer can be written while the case is claimed by you (not while waiting for data, nor after answering).",
    roleMessage: "Only the expert working on this case can answer it.",
    notices: ["case_answered", "receipt"],
  },
  confirm: {
    moves: to(["answered"], ["resolved", "claimed", "closed"]),
    who: ["shop"],
    code: "invalid_transition",
    stateMessage: "There is no answer waiting for confirmation on this case.",
    roleMessage: "Only the shop confirms whether the fix worked.",
    notices: ["case_resolved", "not_fixed", "case_closed"],
  },
  refund: {
    moves: { ...to(HELD, "refunded"), ...stay(["answered", "resolved", "closed"]) },
    who: ["admin"],
    code: "not_refundable",
    stateMessage: "There is no payment on this case to refund.",
    roleMessage: "Only the desk's admins refund payments.",
    notices: ["payment_released", "refund"],
  },
  // --- the desk's own moves (payment webhooks and timed sweeps) ---
  pay: {
    moves: to(["awaiting_payment"], "queued"),
    who: ["desk"],
    code: "invalid_transition",
    stateMessage: "The case is not waiting for its payment.",
    roleMessage: "",
    notices: ["payment_authorized", "case_offered"],
  },
  paymentFails: {
    moves: stay(["awaiting_payment"]),
    who: ["desk"],
    code: "invalid_transition",
    stateMessage: "",
    roleMessage: "",
    notices: ["payment_failed"],
  },
  materialArrives: {
    moves: to(["needs_data"], "claimed"),
    who: ["desk"],
    code: "invalid_transition",
    stateMessage: "",
    roleMessage: "",
    notices: ["data_sent"],
  },
  widenOffers: {
    moves: stay(["queued"]),
    who: ["desk"],
    code: "invalid_transition",
    stateMessage: "",
    roleMessage: "",
    notices: ["case_offered"],
  },
  warnDeadline: {
    moves: stay(["queued", "claimed"]),
    who: ["desk"],
    code: "invalid_transition",
    stateMessage: "",
    roleMessage: "",
    notices: ["deadline_near"],
  },
  missDeadline: {
    moves: to(HELD, "refunded"),
    who: ["desk"],
    code: "invalid_transition",
    stateMessage: "",
    roleMessage: "",
    notices: ["deadline_missed", "payment_released"],
  },
  holdEnds: {
    moves: to(HELD, "refunded"),
    who: ["desk"],
    code: "invalid_transition",
    stateMessage: "",
    roleMessage: "",
    notices: ["payment_released"],
  },
  closeUnconfirmed: {
    moves: to(["answered"], "closed"),
    who: ["desk"],
    code: "invalid_transition",
    stateMessage: "",
    roleMessage: "",
    notices: ["case_closed"],
  },
} as const satisfies Record<string, CaseActionSpec>;

export type CaseAction = keyof typeof caseActions;
export const caseActionNames = Object.keys(caseActions) as CaseAction[];

/** The allowed moves of a case, derived from the action table (a state to itself is not a move). */
export const caseTransitions: Readonly<Record<CaseStatus, readonly CaseStatus[]>> = (() => {
  const out = {} as Record<CaseStatus, CaseStatus[]>;
  for (const s of caseStatuses) out[s] = [];
  for (const spec of Object.values(caseActions) as CaseActionSpec[]) {
    for (const [from, dests] of Object.entries(spec.moves) as [CaseStatus, CaseStatus[]][]) {
      for (const d of dests) if (d !== from && !out[from].includes(d)) out[from].push(d);
    }
  }
  return out;
})();

export function canTransition(from: CaseStatus, to: CaseStatus): boolean {
  return caseTransitions[from].includes(to);
}

/** The states an action starts from. */
export function actionStates(action: CaseAction): CaseStatus[] {
  return Object.keys(caseActions[action].moves) as CaseStatus[];
}

/** May `action` take a case in `from` to `dest`? */
export function actionMoves(action: CaseAction, from: CaseStatus, dest: CaseStatus): boolean {
  const moves: Moves = caseActions[action].moves;
  return moves[from]?.includes(dest) ?? false;
}
