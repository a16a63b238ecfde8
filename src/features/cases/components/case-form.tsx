import { zodResolver } from "@hookform/resolvers/zod";
import { useEffect, useMemo, useRef, useState, type BaseSyntheticEvent, type ReactNode, type RefObject } from "react";
import { Controller, FormProvider, useForm, useWatch, type FieldErrors, type Resolver } from "react-hook-form";
import { systems } from "../../../../shared/domain/case-status";
import { caseReadiness } from "../../../../shared/domain/case-readiness";
import {
  caseDraftSchema,
  fuelLabels,
  fuels,
  LIMITS,
  symptomLabels,
  symptoms,
  transmissionLabels,
  transmissions,
  type CaseDraft,
} from "../../../../shared/schemas/case";
import { ApiError } from "../../../lib/api-client";
import { formatTime } from "../../../../shared/format";
import { useCreateCase } from "../api/create-case";
import type { CaseDetail, CasePhoto } from "../api/types";
import { useUpdateCase } from "../api/update-case";
import { fieldDomId, formFieldPaths, splitServerErrors, toFormValues, type CaseFormValues, type FormFieldPath } from "../lib/form-values";
import { loadLabels, occurrenceLabels, systemLabels, temperatureLabels } from "../lib/labels";
import { CodeChips } from "./code-chips";
import { PhotoUploader } from "./photo-uploader";
import { buttonClass, ChoiceBox, FieldError, inputBase, inputClass, Label, Section } from "./ui";
import { VinField } from "./vin-field";

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

/** Reads a nested error message by path. */
function errorAt(errors: FieldErrors<CaseFormValues>, path: FormFieldPath): string | undefined {
  let cur: unknown = errors;
  for (const p of path.split(".")) cur = (cur as Record<string, unknown> | undefined)?.[p];
  if (!cur) return undefined;
  const node = cur as { message?: unknown; root?: { message?: string } };
  if (typeof node.message === "string") return node.message;
  if (Array.isArray(cur)) return (cur as ({ message?: string } | undefined)[]).find((x) => x?.message)?.message;
  return node.root?.message;
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

export function CaseForm(props: CaseFormProps) {
  const { caseId, initial, photos = [], photoUrl, onDeletePhoto, onCreated, saveRef, children, submitStep } = props;
  const defaults = useMemo(() => toFormValues(initial), [initial]);
  const form = useForm<CaseFormValues, unknown, CaseDraft>({ resolver, defaultValues: defaults, mode: "onTouched" });
  const { register, handleSubmit, control, formState, setError, reset, getValues } = form;
  const create = useCreateCase();
  const update = useUpdateCase();
  const [banner, setBanner] = useState<{ tone: "error" | "ok"; lines: string[] } | null>(null);
  const [showSummary, setShowSummary] = useState(false);
  const idRef = useRef<string | null>(caseId);
  useEffect(() => {
    if (caseId) idRef.current = caseId;
  }, [caseId]);
  const saving = create.isPending || update.isPending;

  const values = useWatch({ control }) as CaseFormValues;

  async function persist(draft: CaseDraft): Promise<string> {
    setBanner(null);
    try {
      let id = idRef.current;
      if (!id) {
        const created = await create.mutateAsync(draft);
        id = created.id;
        idRef.current = id;
        onCreated?.(id);
      } else {
        await update.mutateAsync({ id, patch: draft });
      }
      reset(getValues(), { keepValues: true });
      setShowSummary(false);
      setBanner({ tone: "ok", lines: [`Draft saved at ${formatTime(new Date())}.`] });
      return id;
    } catch (e) {
      if (e instanceof ApiError) {
        const { fields, other } = splitServerErrors(e);
        for (const f of fields) setError(f.path, { type: "server", message: f.message });
        if (fields.length) setShowSummary(true);
        setBanner({ tone: "error", lines: other.length ? other : ["The server refused some fields; they are marked below."] });
      } else {
        setBanner({ tone: "error", lines: ["Could not save the draft. Check the connection and try again."] });
      }
      throw e;
    }
  }

  const onInvalid = () => {
    setShowSummary(true);
    setBanner({ tone: "error", lines: ["Fix the marked fields to save the draft."] });
  };

  const submit = (e?: BaseSyntheticEvent) =>
    handleSubmit((draft) => persist(draft).catch(() => undefined), onInvalid)(e);

  // One save at a time for uploads that need the case: two files dropped together make one draft.
  const inflight = useRef<Promise<string> | null>(null);
  // (set after each render, so it always sees this render's form state; callers use it on user actions)
  useEffect(() => {
    if (!saveRef) return;
    saveRef.current = () => {
      if (idRef.current && !formState.isDirty) return Promise.resolve(idRef.current);
      if (inflight.current) return inflight.current;
      const p = new Promise<string>((resolve, reject) => {
        void handleSubmit(
          (draft) => persist(draft).then(resolve, () => reject(new Error("Save the draft first: the server refused it (see above)."))),
          () => {
            onInvalid();
            reject(new Error("Save the draft first: fix the marked fields in the case form."));
          },
        )();
      }).finally(() => {
        inflight.current = null;
      });
      inflight.current = p;
      return p;
    };
  });

  // Warn before leaving with unsaved changes.
  useEffect(() => {
    if (!formState.isDirty) return;
    const h = (e: BeforeUnloadEvent) => e.preventDefault();
    window.addEventListener("beforeunload", h);
    return () => window.removeEventListener("beforeunload", h);
  }, [formState.isDirty]);

  // What the desk still needs before the case can be sent (the one rule: shared/domain/case-readiness.ts).
  const missing = useMemo(() => caseReadiness(values).issues, [values]);

  const errs = formState.errors;
  const summary = showSummary ? formFieldPaths.map((p) => ({ p, m: errorAt(errs, p) })).filter((x) => x.m) : [];

  const text = (path: FormFieldPath, label: string, opts: { optional?: boolean; type?: string; inputMode?: "numeric" | "text"; max?: number; placeholder?: string; autoComplete?: string } = {}) => {
    const id = fieldDomId(path);
    const err = errorAt(errs, path);
    return (
      <div>
        <Label htmlFor={id} optional={opts.optional}>
          {label}
        </Label>
        <input
          id={id}
          {...register(path as Parameters<typeof register>[0])}
          type={opts.type ?? "text"}
          inputMode={opts.inputMode}
          maxLength={opts.max}
          placeholder={opts.placeholder}
          autoComplete={opts.autoComplete ?? "off"}
          className={inputClass}
          aria-invalid={err ? true : undefined}
          aria-describedby={err ? `${id}-error` : undefined}
        />
        <FieldError id={`${id}-error`} message={err} />
      </div>
    );
  };

  const area = (path: FormFieldPath, label: string, max: number, placeholder: string, optional = true) => {
    const id = fieldDomId(path);
    const err = errorAt(errs, path);
    return (
      <div>
        <Label htmlFor={id} optional={optional}>
          {label}
        </Label>
        <textarea
          id={id}
          {...register(path as Parameters<typeof register>[0])}
          rows={3}
          maxLength={max}
          placeholder={placeholder}
          className={`${inputClass} min-h-24`}
          aria-invalid={err ? true : undefined}
          aria-describedby={err ? `${id}-error` : undefined}
        />
        <FieldError id={`${id}-error`} message={err} />
      </div>
    );
  };

  return (
    <FormProvider {...form}>
      <div className="space-y-5 pb-28">
        {banner ? (
          <div
            role={banner.tone === "error" ? "alert" : "status"}
            className={`rounded-lg border px-4 py-3 text-sm ${
              banner.tone === "error" ? "border-alarm-500 bg-white text-alarm-600" : "border-verdigris-500 bg-white text-verdigris-600"
            }`}
          >
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
        ) : null}

        <form id="case-form" noValidate onSubmit={submit} className="space-y-5" aria-label="Case details">
          <Section id="vehicle" title="Vehicle" description="The VIN fills in the model year. Everything stays editable.">
            <div className="grid gap-4 sm:grid-cols-2">
              <VinField />
              {text("vehicle.year", "Model year", { optional: true, inputMode: "numeric", max: 4, placeholder: "e.g. 2019" })}
              {text("vehicle.make", "Make", { max: LIMITS.make })}
              {text("vehicle.model", "Model", { max: LIMITS.model })}
              {text("vehicle.engine", "Engine", { optional: true, max: LIMITS.engine, placeholder: "e.g. 2.0 L four-cylinder turbo" })}
              <div>
                <Label htmlFor={fieldDomId("vehicle.fuel")} optional>
                  Fuel
                </Label>
                <select id={fieldDomId("vehicle.fuel")} {...register("vehicle.fuel")} className={inputClass}>
                  <option value="">Not stated</option>
                  {fuels.map((f) => (
                    <option key={f} value={f}>
                      {fuelLabels[f]}
                    </option>
                  ))}
                </select>
                <FieldError id={`${fieldDomId("vehicle.fuel")}-error`} message={errorAt(errs, "vehicle.fuel")} />
              </div>
              <div>
                <Label htmlFor={fieldDomId("vehicle.mileage")} optional>
                  Mileage
                </Label>
                <div className="flex gap-2">
                  <input
                    id={fieldDomId("vehicle.mileage")}
                    size={1}
                    {...register("vehicle.mileage")}
                    inputMode="numeric"
                    autoComplete="off"
                    placeholder="Odometer reading"
                    className={inputClass}
                    aria-invalid={errorAt(errs, "vehicle.mileage") ? true : undefined}
                    aria-describedby={errorAt(errs, "vehicle.mileage") ? `${fieldDomId("vehicle.mileage")}-error` : undefined}
                  />
                  <select {...register("vehicle.mileageUnit")} aria-label="Mileage unit" className={`${inputBase} w-24 flex-none`}>
                    <option value="mi">mi</option>
                    <option value="km">km</option>
                  </select>
                </div>
                <FieldError id={`${fieldDomId("vehicle.mileage")}-error`} message={errorAt(errs, "vehicle.mileage")} />
              </div>
              <div>
                <Label htmlFor={fieldDomId("vehicle.transmission")} optional>
                  Transmission
                </Label>
                <select id={fieldDomId("vehicle.transmission")} {...register("vehicle.transmission")} className={inputClass}>
                  <option value="">Not stated</option>
                  {transmissions.map((t) => (
                    <option key={t} value={t}>
                      {transmissionLabels[t]}
                    </option>
                  ))}
                </select>
              </div>
            </div>
          </Section>

          <Section id="complaint" title="Complaint and symptoms">
            {area("complaint", "What the customer reports", LIMITS.complaint, "In the customer's words: what happens, since when, how often.", false)}
            <fieldset>
              <legend className="mb-2 text-sm font-semibold text-ink-800">Symptoms</legend>
              <div className="grid grid-cols-1 gap-2 sm:grid-cols-2 lg:grid-cols-3">
                {symptoms.map((s) => (
                  <ChoiceBox key={s} checked={values.symptoms?.includes(s)}>
                    <input type="checkbox" value={s} {...register("symptoms")} className="h-5 w-5 flex-none accent-kiln-600" />
                    {symptomLabels[s]}
                  </ChoiceBox>
                ))}
              </div>
              <FieldError id="case-symptoms-error" message={errorAt(errs, "symptoms")} />
            </fieldset>
          </Section>

          <Section id="conditions" title="When it happens">
            <div className="grid gap-4 md:grid-cols-3">
              <fieldset>
                <legend className="mb-2 text-sm font-semibold text-ink-800">Engine temperature</legend>
                <div className="grid gap-2">
                  {(["cold", "hot", "any"] as const).map((t) => (
                    <ChoiceBox key={t} checked={values.conditions?.temperature === t}>
                      <input type="radio" value={t} {...register("conditions.temperature")} className="h-5 w-5 accent-kiln-600" />
                      {temperatureLabels[t]}
                    </ChoiceBox>
                  ))}
                </div>
              </fieldset>
              <fieldset>
                <legend className="mb-2 text-sm font-semibold text-ink-800">Load</legend>
                <div className="grid gap-2">
                  {(["idle", "cruise", "load", "any"] as const).map((l) => (
                    <ChoiceBox key={l} checked={values.conditions?.load?.includes(l)}>
                      <input type="checkbox" value={l} {...register("conditions.load")} className="h-5 w-5 accent-kiln-600" />
                      {loadLabels[l]}
                    </ChoiceBox>
                  ))}
                </div>
                <FieldError id="case-conditions-load-error" message={errorAt(errs, "conditions.load")} />
              </fieldset>
              <fieldset>
                <legend className="mb-2 text-sm font-semibold text-ink-800">How often</legend>
                <div className="grid gap-2">
                  {(["intermittent", "constant", ""] as const).map((o) => (
                    <ChoiceBox key={o || "unknown"} checked={(values.conditions?.occurrence ?? "") === o}>
                      <input type="radio" value={o} {...register("conditions.occurrence")} className="h-5 w-5 accent-kiln-600" />
                      {o ? occurrenceLabels[o] : "Not sure"}
                    </ChoiceBox>
                  ))}
                </div>
              </fieldset>
            </div>
          </Section>

          <Section id="codes" title="Trouble codes" description="Stored and pending codes from the scan tool.">
            <Controller
              control={control}
              name="codes"
              render={({ field, fieldState }) => (
                <CodeChips
                  inputId={fieldDomId("codes")}
                  value={field.value ?? []}
                  onChange={(v) => field.onChange(v)}
                  error={fieldState.error?.message ?? errorAt(errs, "codes")}
                />
              )}
            />
          </Section>

          <Section id="work" title="System and work done">
            <fieldset>
              <legend className="mb-2 text-sm font-semibold text-ink-800">System concerned</legend>
              <div className="grid grid-cols-1 gap-2 sm:grid-cols-2 lg:grid-cols-4">
                {systems.map((s) => (
                  <ChoiceBox key={s} checked={values.system === s}>
                    <input type="radio" value={s} {...register("system")} className="h-5 w-5 accent-kiln-600" id={s === systems[0] ? fieldDomId("system") : undefined} />
                    {systemLabels[s]}
                  </ChoiceBox>
                ))}
              </div>
              <FieldError id="case-system-error" message={errorAt(errs, "system")} />
            </fieldset>
            {area("testsDone", "Tests already done", LIMITS.testsDone, "e.g. swapped coils 3 and 4, misfire stayed on cylinder 3; compression 11 bar all cylinders")}
            {area("partsReplaced", "Parts already replaced", LIMITS.partsReplaced, "e.g. spark plugs 2 months ago")}
            {area("notes", "Notes for the expert", LIMITS.notes, "Anything else worth knowing")}
          </Section>

          <Section id="photos" title="Photos" description="The engine bay, the coil or plug, the scope screen, the label. Saving the draft happens first if needed.">
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
      </div>

      <div className="no-print fixed inset-x-0 bottom-0 z-20 border-t border-ink-200 bg-white/95 backdrop-blur">
        <div className="mx-auto flex max-w-7xl items-center gap-3 px-4 py-3">
          <p className="min-w-0 flex-1 truncate text-sm text-ink-600" aria-live="polite">
            {saving ? "Saving…" : formState.isDirty ? "Unsaved changes" : caseId ? "All changes saved" : "Not saved yet"}
          </p>
          {submitStep && missing.length === 0 ? (
            <a href="#submit-step" className={`${buttonClass.secondary} flex-none`}>
              Go to payment
            </a>
          ) : null}
          <button type="submit" form="case-form" className={buttonClass.primary} disabled={saving}>
            {saving ? "Saving…" : "Save draft"}
          </button>
        </div>
      </div>
    </FormProvider>
  );
}
