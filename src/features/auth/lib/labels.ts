import type { VehicleSystem } from "../../../../shared/domain/case-status";

export const systemLabels: Record<VehicleSystem, string> = {
  ignition: "Ignition",
  fuel: "Fuel",
  "starting-charging": "Starting and charging",
  sensors: "Sensors",
  networks: "Networks",
  "engine-mechanical": "Engine mechanical",
  other: "Other",
};

export const roleLabels = { technician: "Technician", owner: "Owner", expert: "Expert", admin: "Desk admin" } as const;
