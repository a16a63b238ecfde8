import { formatDate } from "../../../../shared/format";
import type { FacetDim } from "../../../../shared/schemas/casebook";

export const facetTitles: Record<FacetDim, string> = {
  make: "Make",
  model: "Model",
  year: "Model year",
  engine: "Engine",
  system: "System",
  code: "Trouble code",
  confirmed: "Outcome",
};

export const systemNames: Record<string, string> = {
  ignition: "Ignition",
  fuel: "Fuel delivery",
  "starting-charging": "Starting / charging",
  sensors: "Sensors",
  networks: "Networks / modules",
  "engine-mechanical": "Engine mechanical",
  other: "Other",
};

/** One date format everywhere (shared/format.ts). */
export function formatDay(iso: string | null | undefined): string {
  return formatDate(iso);
}
