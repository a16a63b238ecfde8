import type { VehicleSystem } from "../../../../shared/domain/case-status";
import type { ExpertStatus } from "../../../../shared/schemas/auth";

export const systemLabel: Record<VehicleSystem, string> = {
  ignition: "Ignition",
  fuel: "Fuel",
  "starting-charging": "Starting and charging",
  sensors: "Sensors",
  networks: "Networks",
  "engine-mechanical": "Engine mechanical",
  other: "Other",
};

export const statusLabel: Record<ExpertStatus, string> = {
  pending: "Awaiting review",
  approved: "Approved",
  rejected: "Not approved",
  suspended: "Suspended",
};
