import type { CaseStatus, VehicleSystem } from "../../../../shared/domain/case-status";
import { formatBytes, formatDateTime } from "../../../../shared/format";

export const statusLabels: Record<CaseStatus, string> = {
  draft: "Draft",
  awaiting_payment: "Awaiting payment",
  queued: "Waiting for an expert",
  claimed: "With an expert",
  needs_data: "More data requested",
  answered: "Answered",
  resolved: "Fix confirmed",
  closed: "Closed",
  withdrawn: "Withdrawn",
  // the case ended before an answer and the shop's money came back (the hold released, or a
  // capture refunded): "Refunded" read wrongly beside "Hold released — nothing charged"
  refunded: "Closed, no charge",
};

/** Badge colours per status: kiln for "your move", verdigris for good news, ink for settled. */
export const statusTone: Record<CaseStatus, string> = {
  draft: "bg-ink-100 text-ink-800 ring-ink-300",
  awaiting_payment: "bg-kiln-100 text-kiln-700 ring-kiln-300",
  queued: "bg-white text-ink-700 ring-ink-300",
  claimed: "bg-white text-verdigris-600 ring-verdigris-500",
  needs_data: "bg-kiln-100 text-kiln-700 ring-kiln-400",
  answered: "bg-verdigris-500 text-white ring-verdigris-600",
  resolved: "bg-verdigris-600 text-white ring-verdigris-600",
  closed: "bg-ink-200 text-ink-700 ring-ink-300",
  withdrawn: "bg-ink-100 text-ink-500 ring-ink-200",
  refunded: "bg-ink-100 text-ink-500 ring-ink-200",
};

export const systemLabels: Record<VehicleSystem, string> = {
  ignition: "Ignition",
  fuel: "Fuel delivery",
  "starting-charging": "Starting / charging",
  sensors: "Sensors",
  networks: "Networks / modules",
  "engine-mechanical": "Engine mechanical",
  other: "Other",
};

export const temperatureLabels: Record<string, string> = { cold: "Cold engine", hot: "Hot engine", any: "Cold or hot" };
export const loadLabels: Record<string, string> = {
  idle: "Idle",
  cruise: "Cruise",
  load: "Under load",
  any: "Any load",
};
export const occurrenceLabels: Record<string, string> = { intermittent: "Intermittent", constant: "Constant" };

/** "2019 Veltra Sorrel" (invented make and model) from whatever parts are known. */
export function vehicleTitle(
  v: { year?: number | null; make?: string | null; model?: string | null } | null | undefined,
): string {
  const parts = [v?.year, v?.make, v?.model].filter((x) => x !== null && x !== undefined && String(x).trim() !== "");
  return parts.length ? parts.join(" ") : "Vehicle not entered yet";
}

/** One date format everywhere (shared/format.ts): "Dec 5, 2026, 2:05 PM". */
export function formatDate(v: string | number | undefined | null): string {
  return formatDateTime(v);
}

export { formatBytes };
