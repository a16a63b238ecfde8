import { zodResolver } from "@hookform/resolvers/zod";
import { useMemo, type ReactNode, type RefObject } from "react";
import { FormProvider, useForm, useWatch, type Resolver } from "react-hook-form";
import { caseReadiness, type ReadinessIssue } from "../../../../shared/domain/case-readiness";
import { caseDraftSchema, type CaseDraft } from "../../../../shared/schemas/case";
import type { CaseDetail, CasePhoto } from "../api/types";
import { fieldDomId, formFieldPaths, toFormValues, type CaseFormValues, type FormFieldPath } from "../lib/form-values";
import { useCaseSave, type SaveBanner } from "../hooks/use-case-save";
import {
  CodesSection,
  ComplaintSection,
  ConditionsSection,
  errorAt,
  VehicleSection,
  WorkSection,
} from "./case-form-fields";
import { PhotoUploader } from "./photo-uploader";
import { buttonClass, Section } from "./ui";

const resolver = zodResolver(caseDraftSchema) as unknown as Resolver<CaseFormValues, unknown, CaseDraft>;

export interface CaseFormProps {
  /** null for a new case: the first save creates the draft */
  caseId: string | null;
  initial?: CaseDetail | null;
  photos?: CasePhoto[];
  photoUrl?: (p: CasePhoto) => string | undefined;
  onDeletePhoto?: (p: CasePhoto) => void;
  onCreated?: (id: string) => void;
  /** filled with a function that saves the draft (creating it if needed) and resolves with its id */
  saveRef?: RefObject<(() => Promise<string>) | null>;
  /** more sections shown after the form's own (outside the <form> element), e.g. trace uploads */
  children?: ReactNode;
  /**
   * The next step once the case is ready (the submit and pay step), shown under "Ready for the
   * desk?"; it is told whether the case is ready as typed.
   */
  submitStep?: (state: { ready: boolean }) => ReactNode;
}

const fieldLabels: Record<FormFieldPath, string> = {
  "vehicle.vin": "VIN",
  "vehicle.vinCheckOverride": "VIN check digit",
  "vehicle.year": "Year",
  "vehicle.make": "Make",
  "vehicle.model": "Model",
  "vehicle.engine": "Engine",
  "vehicle.fuel": "Fuel",
  "vehicle.mileage": "Mileage",
  "vehicle.mileageUnit": "Mileage unit",
  "vehicle.transmission": "Transmission",
  complaint: "Complaint",
  codes: "Trouble codes",
  system: "System",
  symptoms: "Symptoms",
  "conditions.temperature": "Engine temperature",
  "conditions.load": "Load",
  "conditions.occurrence": "How often",
  testsDone: "Tests done",
  partsReplaced: "Parts replaced",
  notes: "Notes",
};

/** The save's outcome, with the fields to fix (each a link to its field). */
function Banner({ banner, summary }: { banner: SaveBanner | null; summary: { p: FormFieldPath; m?: string }[] }) {
  if (!banner) return null;
  const tone =
    banner.tone === "error"
      ? "border-alarm-500 bg-white text-alarm-600"
      : "border-verdigris-500 bg-white text-verdigris-600";
  return (
    <div role={banner.tone === "error" ? "alert" : "status"} className={`rounded-lg border px-4 py-3 text-sm ${tone}`}>
      {banner.lines.map((l) => (
        <p key={l} className="font-semibold">
          {l}
        </p>
      ))}
      {summary.length ? (
        <ul className="mt-2 list-disc pl-5 text-ink-800">
          {summary.map(({ p, m }) => (
            <li key={p}>
              <a className="underline" href={`#${fieldDomId(p)}`}>
                {fieldLabels[p]}
              </a>
              : {m}
            </li>
          ))}
        </ul>
      ) : null}
    </div>
  );
}

/** What the desk still needs (the one rule: shared/domain/case-readiness.ts), then the next step. */
function Readiness({ missing, submitStep }: { missing: ReadinessIssue[]; submitStep?: CaseFormProps["submitStep"] }) {
  return (
    <Section id="readiness" title="Ready for the desk?">
      {missing.length === 0 ? (
        <p className="font-semibold text-verdigris-600">Everything the desk needs is filled in.</p>
      ) : (
        <ul className="list-disc space-y-1 pl-5 text-sm text-ink-700">
          {missing.map((m) => (
            <li key={m.path + m.message}>{m.message}</li>
          ))}
        </ul>
      )}
      {submitStep ? submitStep({ ready: missing.length === 0 }) : null}
    </Section>
  );
}

function SaveBar(props: { saving: boolean; dirty: boolean; saved: boolean; toPayment: boolean }) {
  const { saving, dirty, saved, toPayment } = props;
  return (
    <div className="no-print fixed inset-x-0 bottom-0 z-20 border-t border-ink-200 bg-white/95 backdrop-blur">
      <div className="mx-auto flex max-w-7xl items-center gap-3 px-4 py-3">
        <p className="min-w-0 flex-1 truncate text-sm text-ink-600" aria-live="polite">
          {saving ? "Saving…" : dirty ? "Unsaved changes" : saved ? "All changes saved" : "Not saved yet"}
        </p>
        {toPayment ? (
          <a href="#submit-step" className={`${buttonClass.secondary} flex-none`}>
            Go to payment
          </a>
        ) : null}
        <button type="submit" form="case-form" className={buttonClass.primary} disabled={saving}>
          {saving ? "Saving…" : "Save draft"}
        </button>
      </div>
    </div>
  );
}

/**
 * The case form: the vehicle, the complaint, when it happens, the codes, the system and the work
 * done, photos; what the desk still needs and, once ready, the next step (`submitStep`). Saves as a
 * draft at any point (./hooks/use-case-save.ts).
 */
export function CaseForm(props: CaseFormProps) {
  const { caseId, initial, photos = [], photoUrl, onDeletePhoto, onCreated, saveRef, children, submitStep } = props;
  const defaults = useMemo(() => toFormValues(initial), [initial]);
  const form = useForm<CaseFormValues, unknown, CaseDraft>({ resolver, defaultValues: defaults, mode: "onTouched" });
  const { submit, banner, showSummary, saving } = useCaseSave({ form, caseId, onCreated, saveRef });
  const values = useWatch({ control: form.control }) as CaseFormValues;
  const missing = useMemo(() => caseReadiness(values).issues, [values]);
  const errs = form.formState.errors;
  const summary = showSummary ? formFieldPaths.map((p) => ({ p, m: errorAt(errs, p) })).filter((x) => x.m) : [];
  return (
    <FormProvider {...form}>
      <div className="space-y-5 pb-28">
        <Banner banner={banner} summary={summary} />
        <form id="case-form" noValidate onSubmit={submit} className="space-y-5" aria-label="Case details">
          <VehicleSection />
          <ComplaintSection />
          <ConditionsSection />
          <CodesSection />
          <WorkSection />
          <Section
            id="photos"
            title="Photos"
            description={
              "The engine bay, the coil or plug, the scope screen, the label. " +
              "Saving the draft happens first if needed."
            }
          >
            <PhotoUploader
              caseId={caseId}
              ensureCaseId={() => saveRef?.current?.() ?? Promise.reject(new Error("Save the draft first."))}
              photos={photos}
              photoUrl={photoUrl}
              onDelete={onDeletePhoto}
            />
          </Section>
        </form>
        {children}
        <Readiness missing={missing} submitStep={submitStep} />
      </div>
      <SaveBar
        saving={saving}
        dirty={form.formState.isDirty}
        saved={!!caseId}
        toPayment={!!submitStep && missing.length === 0}
      />
    </FormProvider>
  );
}
