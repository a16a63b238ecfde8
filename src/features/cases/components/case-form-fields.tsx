/**
 * The sections of the case form (./case-form.tsx), each reading the form from its context: the
 * vehicle, the complaint and symptoms, when it happens, the trouble codes, the system and the work
 * done. Field errors show under each field, wired by aria attributes.
 */
import { Controller, useFormContext, useWatch, type FieldErrors } from "react-hook-form";
import { systems } from "../../../../shared/domain/case-status";
import {
  fuelLabels,
  fuels,
  LIMITS,
  symptomLabels,
  symptoms,
  transmissionLabels,
  transmissions,
} from "../../../../shared/schemas/case";
import { fieldDomId, type CaseFormValues, type FormFieldPath } from "../lib/form-values";
import { loadLabels, occurrenceLabels, systemLabels, temperatureLabels } from "../lib/labels";
import { CodeChips } from "./code-chips";
import { ChoiceBox, FieldError, inputBase, inputClass, Label, Section } from "./ui";
import { VinField } from "./vin-field";

/** Reads a nested error message by path. */
export function errorAt(errors: FieldErrors<CaseFormValues>, path: FormFieldPath): string | undefined {
  let cur: unknown = errors;
  for (const p of path.split(".")) cur = (cur as Record<string, unknown> | undefined)?.[p];
  if (!cur) return undefined;
  const node = cur as { message?: unknown; root?: { message?: string } };
  if (typeof node.message === "string") return node.message;
  if (Array.isArray(cur)) return (cur as ({ message?: string } | undefined)[]).find((x) => x?.message)?.message;
  return node.root?.message;
}

/** The form, its errors and its values as typed (for the choice boxes' look). */
function useCaseFields() {
  const form = useFormContext<CaseFormValues>();
  const values = useWatch({ control: form.control }) as CaseFormValues;
  return { ...form, errs: form.formState.errors, values };
}

interface TextOptions {
  optional?: boolean;
  type?: string;
  inputMode?: "numeric" | "text";
  max?: number;
  placeholder?: string;
  autoComplete?: string;
}

function TextInput({ path, label, opts = {} }: { path: FormFieldPath; label: string; opts?: TextOptions }) {
  const { register, errs } = useCaseFields();
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
}

function TextArea(props: { path: FormFieldPath; label: string; max: number; placeholder: string; required?: boolean }) {
  const { register, errs } = useCaseFields();
  const { path, label, max, placeholder, required } = props;
  const id = fieldDomId(path);
  const err = errorAt(errs, path);
  return (
    <div>
      <Label htmlFor={id} optional={!required}>
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
}

export function VehicleSection() {
  const { register, errs } = useCaseFields();
  return (
    <Section id="vehicle" title="Vehicle" description="The VIN fills in the model year. Everything stays editable.">
      <div className="grid gap-4 sm:grid-cols-2">
        <VinField />
        <TextInput
          path={"vehicle.year"}
          label="Model year"
          opts={{ optional: true, inputMode: "numeric", max: 4, placeholder: "e.g. 2019" }}
        />
        <TextInput path={"vehicle.make"} label="Make" opts={{ max: LIMITS.make }} />
        <TextInput path={"vehicle.model"} label="Model" opts={{ max: LIMITS.model }} />
        <TextInput
          path={"vehicle.engine"}
          label="Engine"
          opts={{ optional: true, max: LIMITS.engine, placeholder: "e.g. 2.0 L four-cylinder turbo" }}
        />
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
            <select
              {...register("vehicle.mileageUnit")}
              aria-label="Mileage unit"
              className={`${inputBase} w-24 flex-none`}
            >
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
  );
}

export function ComplaintSection() {
  const { register, errs, values } = useCaseFields();
  return (
    <Section id="complaint" title="Complaint and symptoms">
      <TextArea
        path={"complaint"}
        label="What the customer reports"
        max={LIMITS.complaint}
        placeholder="In the customer's words: what happens, since when, how often."
        required
      />
      <fieldset>
        <legend className="mb-2 text-sm font-semibold text-ink-800">Symptoms</legend>
        <div className="grid grid-cols-1 gap-2 sm:grid-cols-2 lg:grid-cols-3">
          {symptoms.map((s) => (
            <ChoiceBox key={s} checked={values.symptoms?.includes(s)}>
              <input
                type="checkbox"
                value={s}
                {...register("symptoms")}
                className="h-5 w-5 flex-none accent-kiln-600"
              />
              {symptomLabels[s]}
            </ChoiceBox>
          ))}
        </div>
        <FieldError id="case-symptoms-error" message={errorAt(errs, "symptoms")} />
      </fieldset>
    </Section>
  );
}

export function ConditionsSection() {
  const { register, errs, values } = useCaseFields();
  return (
    <Section id="conditions" title="When it happens">
      <div className="grid gap-4 md:grid-cols-3">
        <fieldset>
          <legend className="mb-2 text-sm font-semibold text-ink-800">Engine temperature</legend>
          <div className="grid gap-2">
            {(["cold", "hot", "any"] as const).map((t) => (
              <ChoiceBox key={t} checked={values.conditions?.temperature === t}>
                <input
                  type="radio"
                  value={t}
                  {...register("conditions.temperature")}
                  className="h-5 w-5 accent-kiln-600"
                />
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
                <input
                  type="radio"
                  value={o}
                  {...register("conditions.occurrence")}
                  className="h-5 w-5 accent-kiln-600"
                />
                {o ? occurrenceLabels[o] : "Not sure"}
              </ChoiceBox>
            ))}
          </div>
        </fieldset>
      </div>
    </Section>
  );
}

export function CodesSection() {
  const { errs, control } = useCaseFields();
  return (
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
  );
}

export function WorkSection() {
  const { register, errs, values } = useCaseFields();
  return (
    <Section id="work" title="System and work done">
      <fieldset>
        <legend className="mb-2 text-sm font-semibold text-ink-800">System concerned</legend>
        <div className="grid grid-cols-1 gap-2 sm:grid-cols-2 lg:grid-cols-4">
          {systems.map((s) => (
            <ChoiceBox key={s} checked={values.system === s}>
              <input
                type="radio"
                value={s}
                {...register("system")}
                className="h-5 w-5 accent-kiln-600"
                id={s === systems[0] ? fieldDomId("system") : undefined}
              />
              {systemLabels[s]}
            </ChoiceBox>
          ))}
        </div>
        <FieldError id="case-system-error" message={errorAt(errs, "system")} />
      </fieldset>
      <TextArea
        path={"testsDone"}
        label="Tests already done"
        max={LIMITS.testsDone}
        placeholder="e.g. swapped coils 3 and 4, misfire stayed on cylinder 3; compression 11 bar all cylinders"
      />
      <TextArea
        path={"partsReplaced"}
        label="Parts already replaced"
        max={LIMITS.partsReplaced}
        placeholder="e.g. spark plugs 2 months ago"
      />
      <TextArea
        path={"notes"}
        label="Notes for the expert"
        max={LIMITS.notes}
        placeholder="Anything else worth knowing"
      />
    </Section>
  );
}
