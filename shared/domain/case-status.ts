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

/** The allowed moves of a case. Anything else is refused with 409 and changes nothing. */
export const caseTransitions: Record<CaseStatus, readonly CaseStatus[]> = {
  draft: ["awaiting_payment", "withdrawn"],
  awaiting_payment: ["queued", "draft", "withdrawn"],
  queued: ["claimed", "withdrawn", "refunded"],
  claimed: ["needs_data", "answered", "queued", "refunded"],
  needs_data: ["claimed", "refunded"],
  answered: ["resolved", "closed", "claimed"],
  resolved: [],
  closed: [],
  withdrawn: [],
  refunded: [],
};

export function canTransition(from: CaseStatus, to: CaseStatus): boolean {
  return caseTransitions[from].includes(to);
}

export const roles = ["technician", "owner", "expert", "admin"] as const;
export type Role = (typeof roles)[number];

export const systems = ["ignition", "fuel", "starting-charging", "sensors", "networks", "engine-mechanical", "other"] as const;
export type VehicleSystem = (typeof systems)[number];
