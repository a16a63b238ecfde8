/**
 * Case form schemas (zod 4), shared by the client form and the server routes.
 *
 * Conventions:
 * - Text is trimmed. Optional text may be "" (empty = nothing written).
 * - Optional numbers and choices accept "", null or NaN (an empty form field) and give null,
 *   so that a patch can clear them: a key left out means "unchanged", null means "cleared".
 * - The VIN is normalized and checked structurally only (length, characters, the check-digit
 *   character, the model-year code of a North American VIN). A wrong check digit, a missing year
 *   code outside North America and a VIN year that differs from the year field are warnings the
 *   technician may override (vinCheckOverride); they are NOT schema errors — see validateVin in
 *   shared/domain/vin.ts and vehicleVinWarnings below.
 * - Trouble codes are normalized ("p0304" → "P0304"), checked against SAE J2012 and deduplicated.
 */
import { z } from "zod";
import { caseStatuses, systems } from "../domain/case-status";
import { normalizeDtc, validateDtc } from "../domain/dtc";
import { decodeVin, normalizeVin, validateVin } from "../domain/vin";

// ---------------------------------------------------------------------------------------------
// Choices (with labels for the form)

export const fuels = ["gasoline", "diesel", "hybrid", "flex", "lpg-cng", "other"] as const;
export type Fuel = (typeof fuels)[number];
export const fuelLabels: Readonly<Record<Fuel, string>> = {
  gasoline: "Gasoline",
  diesel: "Diesel",
  hybrid: "Hybrid",
  flex: "Flex fuel",
  "lpg-cng": "LPG / CNG",
  other: "Other",
};

export const transmissions = ["automatic", "manual", "cvt", "dct", "other"] as const;
export type Transmission = (typeof transmissions)[number];
export const transmissionLabels: Readonly<Record<Transmission, string>> = {
  automatic: "Automatic",
  manual: "Manual",
  cvt: "CVT",
  dct: "Dual-clutch",
  other: "Other",
};

export const mileageUnits = ["km", "mi"] as const;
export type MileageUnit = (typeof mileageUnits)[number];

export const symptoms = [
  "misfire",
  "rough-idle",
  "no-start",
  "hard-start",
  "stall",
  "hesitation",
  "loss-of-power",
  "check-engine-light-on",
  "check-engine-light-flashing",
  "poor-economy",
  "backfire",
  "surge",
  "knock-ping",
  "vibration",
  "smoke",
  "fuel-smell",
  "overheating",
  "battery-drain",
] as const;
export type Symptom = (typeof symptoms)[number];
export const symptomLabels: Readonly<Record<Symptom, string>> = {
  misfire: "Misfire",
  "rough-idle": "Rough idle",
  "no-start": "No start",
  "hard-start": "Hard start",
  stall: "Stalls",
  hesitation: "Hesitation / stumble",
  "loss-of-power": "Loss of power",
  "check-engine-light-on": "Check-engine light on",
  "check-engine-light-flashing": "Check-engine light flashing",
  "poor-economy": "Poor fuel economy",
  backfire: "Backfire",
  surge: "Surging",
  "knock-ping": "Knock / ping",
  vibration: "Vibration",
  smoke: "Smoke from exhaust",
  "fuel-smell": "Fuel smell",
  overheating: "Overheating",
  "battery-drain": "Battery drain",
};

export const temperatureConditions = ["cold", "hot", "any"] as const;
export const loadConditions = ["idle", "cruise", "load", "any"] as const;
export const occurrences = ["intermittent", "constant"] as const;
export type TemperatureCondition = (typeof temperatureConditions)[number];
export type LoadCondition = (typeof loadConditions)[number];
export type Occurrence = (typeof occurrences)[number];

/**
 * "attention": overdue answers first, then deadlines at risk, then the other running deadlines
 * (soonest first), then the cases waiting on the shop, then finished cases (latest first).
 * "deadline": soonest answer deadline first (cases without one last).
 */
export const caseSortFields = ["createdAt", "updatedAt", "status", "vehicle", "year", "attention", "deadline"] as const;
/** Case list filters by stage: open (draft … answered) or finished (resolved, closed, withdrawn, refunded). */
export const caseStates = ["open", "finished"] as const;
/** Case list filters by answer deadline (shared/domain/deadline-risk.ts). */
export const caseDeadlineFilters = ["overdue", "at_risk", "next_24h"] as const;
export type CaseState = (typeof caseStates)[number];
export type CaseDeadlineFilter = (typeof caseDeadlineFilters)[number];
export type CaseSortField = (typeof caseSortFields)[number];

export const LIMITS = {
  complaint: 4000,
  testsDone: 4000,
  partsReplaced: 2000,
  notes: 4000,
  make: 60,
  model: 60,
  engine: 80,
  codes: 30,
  yearMin: 1950,
  yearMax: 2050,
  mileageMax: 5_000_000,
  pageSizeMax: 100,
} as const;

// ---------------------------------------------------------------------------------------------
// Field helpers

const isBlank = (v: unknown) =>
  v === null ||
  v === undefined ||
  (typeof v === "string" && v.trim() === "") ||
  (typeof v === "number" && Number.isNaN(v));

/** "" / null / NaN → null; numeric strings → numbers; anything else passes through. */
const blankToNull = (v: unknown) => {
  if (v === undefined) return undefined;
  if (isBlank(v)) return null;
  if (typeof v === "string" && /^\s*-?\d+(\.\d+)?\s*$/.test(v)) return Number(v);
  return v;
};

const choiceBlankToNull = (v: unknown) => (v === undefined ? undefined : isBlank(v) ? null : v);

function text(label: string, max: number) {
  return z
    .string({ error: `${label} must be text.` })
    .trim()
    .max(max, { error: `${label} is too long (at most ${max} characters).` });
}

function requiredText(label: string, max: number, emptyMessage: string) {
  return z
    .string({ error: (iss) => (iss.input === undefined ? emptyMessage : `${label} must be text.`) })
    .trim()
    .min(1, { error: emptyMessage })
    .max(max, { error: `${label} is too long (at most ${max} characters).` });
}

function wholeNumber(label: string, min: number, max: number, rangeMessage: string) {
  return z.preprocess(
    blankToNull,
    z
      .number({ error: `${label} must be a number.` })
      .int({ error: `${label} must be a whole number.` })
      .min(min, { error: rangeMessage })
      .max(max, { error: rangeMessage })
      .nullable(),
  );
}

function choice<const T extends readonly [string, ...string[]]>(values: T, message: string) {
  return z.preprocess(choiceBlankToNull, z.enum(values, { error: message }).nullable());
}

/** VIN: normalized; "" means no VIN; otherwise structurally valid (the check digit is a warning only). */
export const vinField = z
  .string({ error: "The VIN must be text." })
  .transform((s) => normalizeVin(s))
  .superRefine((vin, ctx) => {
    if (vin === "") return;
    for (const e of validateVin(vin).errors) ctx.addIssue({ code: "custom", message: e.message });
  });

/** One trouble code, normalized and checked against the SAE J2012 form. */
export const dtcField = z
  .string({ error: "A trouble code must be text, e.g. P0301." })
  .transform((s) => normalizeDtc(s))
  .superRefine((code, ctx) => {
    const v = validateDtc(code);
    if (!v.ok) ctx.addIssue({ code: "custom", message: v.error.message });
  });

/**
 * A list of trouble codes: an array, or a string of codes separated by commas, semicolons or
 * spaces (as typed in one box). Normalized, deduplicated in order, at most 30.
 */
export const dtcListField = z
  .preprocess(
    (v) => (typeof v === "string" ? v.split(/[\s,;]+/).filter((s) => s !== "") : v),
    z.array(dtcField, { error: "Trouble codes must be a list, e.g. P0301, P0304." }).max(200, {
      error: `Enter at most ${LIMITS.codes} trouble codes.`,
    }),
  )
  .transform((codes) => [...new Set(codes)])
  .refine((codes) => codes.length <= LIMITS.codes, { error: `Enter at most ${LIMITS.codes} trouble codes.` });

function uniqueList<const T extends readonly [string, ...string[]]>(values: T, message: string, label: string) {
  return z
    .array(z.enum(values, { error: message }), { error: `${label} must be a list.` })
    .max(values.length * 2, { error: `${label}: too many entries.` })
    .transform((a) => [...new Set(a)]);
}

const symptomsField = uniqueList(symptoms, "Choose symptoms from the checklist.", "Symptoms");

const fields = {
  vin: vinField,
  vinCheckOverride: z.boolean({
    error: "Choose whether to keep a VIN despite its warnings (e.g. a check digit that does not match).",
  }),
  year: wholeNumber(
    "Year",
    LIMITS.yearMin,
    LIMITS.yearMax,
    `Enter a model year between ${LIMITS.yearMin} and ${LIMITS.yearMax}.`,
  ),
  make: text("Make", LIMITS.make),
  model: text("Model", LIMITS.model),
  engine: text("Engine", LIMITS.engine),
  fuel: choice(fuels, "Choose a fuel from the list."),
  mileage: wholeNumber(
    "Mileage",
    0,
    LIMITS.mileageMax,
    `Enter the odometer reading as a whole number from 0 to ${LIMITS.mileageMax.toLocaleString("en-US")}.`,
  ),
  mileageUnit: z.enum(mileageUnits, { error: "Choose km or mi." }),
  transmission: choice(transmissions, "Choose a transmission from the list."),
};

const conditionFields = {
  temperature: z.enum(temperatureConditions, { error: "Choose cold, hot or any." }),
  load: uniqueList(loadConditions, "Choose idle, cruise, load or any.", "Load conditions"),
  occurrence: choice(occurrences, "Choose intermittent or constant."),
};

// ---------------------------------------------------------------------------------------------
// Vehicle

/** The vehicle of a complete case. Make and model are required; the rest is optional. */
export const vehicleSchema = z.strictObject({
  vin: fields.vin.optional(),
  vinCheckOverride: fields.vinCheckOverride.default(false),
  year: fields.year.optional(),
  make: requiredText("Make", LIMITS.make, "Enter the make."),
  model: requiredText("Model", LIMITS.model, "Enter the model."),
  engine: fields.engine.optional(),
  fuel: fields.fuel.optional(),
  mileage: fields.mileage.optional(),
  mileageUnit: fields.mileageUnit.default("mi"),
  transmission: fields.transmission.optional(),
});

/** The vehicle of a draft or patch: every key optional, no defaults. */
export const vehicleDraftSchema = z.strictObject({
  vin: fields.vin.optional(),
  vinCheckOverride: fields.vinCheckOverride.optional(),
  year: fields.year.optional(),
  make: fields.make.optional(),
  model: fields.model.optional(),
  engine: fields.engine.optional(),
  fuel: fields.fuel.optional(),
  mileage: fields.mileage.optional(),
  mileageUnit: fields.mileageUnit.optional(),
  transmission: fields.transmission.optional(),
});

// ---------------------------------------------------------------------------------------------
// Conditions

export const conditionsSchema = z.strictObject({
  temperature: conditionFields.temperature.default("any"),
  load: conditionFields.load.default(["any"]),
  occurrence: conditionFields.occurrence.optional(),
});

export const conditionsDraftSchema = z.strictObject({
  temperature: conditionFields.temperature.optional(),
  load: conditionFields.load.optional(),
  occurrence: conditionFields.occurrence.optional(),
});

// ---------------------------------------------------------------------------------------------
// Case

const systemField = z.enum(systems, { error: "Choose the system concerned." });

/** A complete case: what the form requires before the case can go to the desk. */
export const caseCreateSchema = z.strictObject({
  vehicle: vehicleSchema,
  complaint: requiredText("The complaint", LIMITS.complaint, "Describe the customer's complaint."),
  codes: dtcListField.default([]),
  system: systemField,
  symptoms: symptomsField.default([]),
  conditions: conditionsSchema.default({ temperature: "any", load: ["any"] }),
  testsDone: text("Tests done", LIMITS.testsDone).default(""),
  partsReplaced: text("Parts replaced", LIMITS.partsReplaced).default(""),
  notes: text("Notes", LIMITS.notes).default(""),
});

/** A draft may be saved at any point: every key optional, but what is present must be well formed. */
export const caseDraftSchema = z.strictObject({
  vehicle: vehicleDraftSchema.optional(),
  complaint: text("The complaint", LIMITS.complaint).optional(),
  codes: dtcListField.optional(),
  system: z.preprocess(choiceBlankToNull, systemField.nullable()).optional(),
  symptoms: symptomsField.optional(),
  conditions: conditionsDraftSchema.optional(),
  testsDone: text("Tests done", LIMITS.testsDone).optional(),
  partsReplaced: text("Parts replaced", LIMITS.partsReplaced).optional(),
  notes: text("Notes", LIMITS.notes).optional(),
});

/**
 * PATCH /api/cases/:id (draft only): the same fields as a draft, all optional, no defaults —
 * a key left out is unchanged; null clears an optional number or choice; nested objects are
 * merged key by key.
 */
export const casePatchSchema = caseDraftSchema;

// ---------------------------------------------------------------------------------------------
// Case list query (GET /api/cases?status=&q=&page=…), coerced from query strings

/** Express may give an array for a repeated key; take the last value. "" counts as absent. */
const queryValue = (v: unknown) => {
  const x = Array.isArray(v) ? v[v.length - 1] : v;
  return typeof x === "string" && x.trim() === "" ? undefined : x;
};

function queryInt(label: string, min: number, max: number, def: number) {
  return z.preprocess(
    (v) => {
      const x = queryValue(v);
      return typeof x === "string" && /^\s*-?\d+\s*$/.test(x) ? Number(x) : x;
    },
    z
      .number({ error: `${label} must be a whole number.` })
      .int({ error: `${label} must be a whole number.` })
      .min(min, { error: `${label} must be at least ${min}.` })
      .max(max, { error: `${label} must be at most ${max}.` })
      .default(def),
  );
}

export const caseListQuerySchema = z.object({
  status: z.preprocess(queryValue, z.enum(caseStatuses, { error: "Unknown case status." }).optional()),
  q: z.preprocess(
    queryValue,
    z
      .string({ error: "Search text must be text." })
      .trim()
      .max(200, { error: "Search text is too long (at most 200 characters)." })
      .optional(),
  ),
  vehicle: z.preprocess(
    queryValue,
    z
      .string({ error: "Vehicle filter must be text." })
      .trim()
      .max(200, { error: "Vehicle filter is too long (at most 200 characters)." })
      .optional(),
  ),
  page: queryInt("Page", 1, Number.MAX_SAFE_INTEGER, 1),
  pageSize: queryInt("Page size", 1, LIMITS.pageSizeMax, 20),
  sort: z.preprocess(queryValue, z.enum(caseSortFields, { error: "Unknown sort field." }).optional()),
  dir: z.preprocess(queryValue, z.enum(["asc", "desc"], { error: "Sort direction must be asc or desc." }).optional()),
  state: z.preprocess(queryValue, z.enum(caseStates, { error: "State is open or finished." }).optional()),
  deadline: z.preprocess(
    queryValue,
    z.enum(caseDeadlineFilters, { error: "Deadline is overdue, at_risk or next_24h." }).optional(),
  ),
  expertId: z.preprocess(queryValue, z.string({ error: "Expert must be an id." }).trim().min(1).max(64).optional()),
  shopId: z.preprocess(queryValue, z.string({ error: "Shop must be an id." }).trim().min(1).max(64).optional()),
});

// ---------------------------------------------------------------------------------------------
// Types

export type VehicleInput = z.input<typeof vehicleSchema>;
export type Vehicle = z.output<typeof vehicleSchema>;
export type VehicleDraft = z.output<typeof vehicleDraftSchema>;
export type Conditions = z.output<typeof conditionsSchema>;
export type CaseCreateInput = z.input<typeof caseCreateSchema>;
export type CaseCreate = z.output<typeof caseCreateSchema>;
export type CaseDraftInput = z.input<typeof caseDraftSchema>;
export type CaseDraft = z.output<typeof caseDraftSchema>;
export type CasePatch = z.output<typeof casePatchSchema>;
export type CaseListQueryInput = z.input<typeof caseListQuerySchema>;
export type CaseListQuery = z.output<typeof caseListQuerySchema>;

/**
 * The VIN warnings to show (or to record) for a parsed vehicle, unless the technician overrode
 * them (vinCheckOverride): those of validateVin ("check-digit", "year-character") and
 * "year-mismatch" when the model year the VIN decodes to (position 10, the cycle chosen by
 * position 7 — 49 CFR 565.15) differs from the year field. Empty when there is no VIN or the VIN is
 * malformed (that is a schema error, not a warning). Pass `year` for the year check.
 */
export function vehicleVinWarnings(vehicle: {
  vin?: string | null;
  vinCheckOverride?: boolean;
  year?: number | null;
}): { code: string; message: string; expected?: string }[] {
  if (!vehicle.vin || vehicle.vinCheckOverride) return [];
  const check = validateVin(vehicle.vin);
  if (!check.ok) return [];
  const out: { code: string; message: string; expected?: string }[] = check.warnings.map(
    ({ code, message, expected }) => ({ code, message, expected }),
  );
  const year = vehicle.year;
  if (typeof year === "number" && Number.isInteger(year)) {
    const vinYear = decodeVin(check.vin).modelYear;
    if (vinYear !== null && vinYear !== year) {
      out.push({
        code: "year-mismatch",
        message: `The VIN gives model year ${vinYear} (position 10), but the year entered is ${year}. Check both; the model year can differ from the year the vehicle was built or sold.`,
        expected: String(vinYear),
      });
    }
  }
  return out;
}
