import type { CaseDraft } from "../../../../shared/schemas/case";
import type { ApiError } from "../../../lib/api-client";
import { codeStrings, type CaseDetail } from "../api/types";

/**
 * The case form's own values: what the inputs hold (text for numbers, "" for "not chosen").
 * The shared draft schema turns them into the API's shape (numbers, nulls) on save.
 */
export interface CaseFormValues {
  vehicle: {
    vin: string;
    vinCheckOverride: boolean;
    year: string;
    make: string;
    model: string;
    engine: string;
    fuel: string;
    mileage: string;
    mileageUnit: "km" | "mi";
    transmission: string;
  };
  complaint: string;
  codes: string[];
  system: string;
  symptoms: string[];
  conditions: { temperature: "cold" | "hot" | "any"; load: string[]; occurrence: string };
  testsDone: string;
  partsReplaced: string;
  notes: string;
}

const s = (v: unknown) => (v === null || v === undefined ? "" : String(v));

export function toFormValues(c?: CaseDetail | null): CaseFormValues {
  const v = c?.vehicle;
  const temp = c?.conditions?.temperature;
  return {
    vehicle: {
      vin: s(v?.vin),
      vinCheckOverride: !!v?.vinCheckOverride,
      year: s(v?.year),
      make: s(v?.make),
      model: s(v?.model),
      engine: s(v?.engine),
      fuel: s(v?.fuel),
      mileage: s(v?.mileage),
      mileageUnit: v?.mileageUnit === "km" ? "km" : "mi",
      transmission: s(v?.transmission),
    },
    complaint: s(c?.complaint),
    codes: codeStrings(c?.codes),
    system: s(c?.system),
    symptoms: c?.symptoms ?? [],
    conditions: {
      temperature: temp === "cold" || temp === "hot" ? temp : "any",
      load: c?.conditions?.load ?? [],
      occurrence: s(c?.conditions?.occurrence),
    },
    testsDone: s(c?.testsDone),
    partsReplaced: s(c?.partsReplaced),
    notes: s(c?.notes),
  };
}

/** Form fields a server error path can land on. */
export const formFieldPaths = [
  "vehicle.vin",
  "vehicle.vinCheckOverride",
  "vehicle.year",
  "vehicle.make",
  "vehicle.model",
  "vehicle.engine",
  "vehicle.fuel",
  "vehicle.mileage",
  "vehicle.mileageUnit",
  "vehicle.transmission",
  "complaint",
  "codes",
  "system",
  "symptoms",
  "conditions.temperature",
  "conditions.load",
  "conditions.occurrence",
  "testsDone",
  "partsReplaced",
  "notes",
] as const;
export type FormFieldPath = (typeof formFieldPaths)[number];

/** DOM id of each field's input, for error summaries that link to the field. */
export const fieldDomId = (path: FormFieldPath) => "case-" + path.replace(/\./g, "-");

/**
 * A server path ("vehicle.vin", "codes.2", ["conditions","load",0]) → the form field it belongs
 * to, or null when the form has no such field (shown in the banner instead).
 */
export function toFormPath(path: string | (string | number)[]): FormFieldPath | null {
  const parts = (Array.isArray(path) ? path.map(String) : String(path).split(/[.[\]]+/)).filter(Boolean);
  while (parts.length) {
    const p = parts.join(".") as FormFieldPath;
    if ((formFieldPaths as readonly string[]).includes(p)) return p;
    parts.pop();
  }
  return null;
}

/** The field messages of an API error, split into those the form can show and the rest. */
export function splitServerErrors(err: ApiError): {
  fields: { path: FormFieldPath; message: string }[];
  other: string[];
} {
  const fields: { path: FormFieldPath; message: string }[] = [];
  const other: string[] = [];
  for (const f of err.details?.fields ?? []) {
    const p = toFormPath(f.path);
    if (p) fields.push({ path: p, message: f.message });
    else other.push(f.path ? `${f.path}: ${f.message}` : f.message);
  }
  if (fields.length === 0 && other.length === 0) other.push(err.message);
  return { fields, other };
}

export type { CaseDraft };
