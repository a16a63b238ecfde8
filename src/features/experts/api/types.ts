import type { ExpertStatus } from "../../../../shared/schemas/auth";
import type { VehicleSystem } from "../../../../shared/domain/case-status";

export interface ExpertProfile {
  userId: string;
  systems: VehicleSystem[];
  makes: string[];
  bio: string | null;
  yearsExperience: number | null;
  status: ExpertStatus;
  available: boolean;
  maxOpenCases: number;
  decidedAt: string | null;
  createdAt: string;
}

export interface ExpertAbilities {
  list: boolean;
  view: boolean;
  decide: boolean;
  setAvailability: boolean;
}
