/**
 * Is a case ready for the desk? One rule for the form (as the technician types), the case page
 * (`readiness` in GET /api/cases/:id) and the submit command (409 `case_incomplete`): the
 * complete-case schema (`caseCreateSchema`: make, model, complaint and system are required, what is
 * present must be well formed) plus the VIN's own warnings the technician has not overridden (a check
 * digit that does not match, a model-year character that gives no year). A model year entered that
 * differs from the VIN's is shown with the case (`vinWarnings`) but does not hold it back: the model
 * year and the year a vehicle was built or sold can differ.
 */
import { caseCreateSchema, vehicleVinWarnings } from "../schemas/case";

export interface ReadinessIssue {
  path: string;
  message: string;
}

export interface CaseReadiness {
  complete: boolean;
  /** one per field path (e.g. "system", "vehicle.make"), in the form's order */
  issues: ReadinessIssue[];
}

/** The case's fields as a form holds them or as a stored row gives them (null and absent alike). */
export interface ReadinessInput {
  vehicle?: Record<string, unknown> | null;
  complaint?: unknown;
  codes?: unknown;
  system?: unknown;
  symptoms?: unknown;
  conditions?: unknown;
  testsDone?: unknown;
  partsReplaced?: unknown;
  notes?: unknown;
}

const present = (o: Record<string, unknown>): Record<string, unknown> =>
  Object.fromEntries(Object.entries(o).filter(([, v]) => v !== null && v !== undefined));

export function caseReadiness(input: ReadinessInput): CaseReadiness {
  const vehicle = present(input.vehicle ?? {});
  const { vehicle: _v, ...rest } = input;
  const r = caseCreateSchema.safeParse({ ...present(rest as Record<string, unknown>), vehicle });
  const issues: ReadinessIssue[] = [];
  const add = (i: ReadinessIssue) => {
    if (!issues.some((x) => x.path === i.path)) issues.push(i);
  };
  if (!r.success) for (const i of r.error.issues) add({ path: i.path.map(String).join("."), message: i.message });
  const vin = typeof vehicle.vin === "string" ? vehicle.vin : null;
  for (const w of vehicleVinWarnings({ vin, vinCheckOverride: vehicle.vinCheckOverride === true }))
    add({ path: "vehicle.vin", message: w.message });
  return { complete: issues.length === 0, issues };
}
