import type { ReactNode } from "react";
import { probeKinds, traceKinds, type TraceKind } from "../../../../shared/schemas/capture-settings";
import {
  kindLabels,
  probeLabels,
  rateUnits,
  timeUnits,
  withKind,
  type SettingsDraft,
  type SettingsErrors,
  type SettingsField,
} from "../lib/settings";
import { SafetyCaution } from "./safety-caution";

const inputBase =
  "block min-h-11 rounded-lg border border-ink-300 bg-white px-3 py-2 text-base text-ink-900 placeholder:text-ink-400 focus:border-kiln-500 focus:outline-none focus:ring-2 focus:ring-kiln-300 aria-[invalid=true]:border-alarm-500 disabled:bg-ink-50";
const input = `${inputBase} w-full min-w-0`;

interface Props {
  idPrefix: string;
  draft: SettingsDraft;
  onChange: (d: SettingsDraft) => void;
  errors: SettingsErrors;
  /** the file has no time column and no rate in its metadata */
  needsRate: boolean;
  /** the rate came from the file */
  rateFromFile: boolean;
  channelNames: string[];
  /** unit of the first channel, e.g. "V" or "kV" */
  unit: string;
  guess: { kind: TraceKind; reason: string };
  fromFile: (keyof SettingsDraft)[];
  disabled?: boolean;
}

function Field({
  id,
  label,
  error,
  hint,
  children,
  required,
}: {
  id: string;
  label: string;
  error?: string;
  hint?: ReactNode;
  children: ReactNode;
  required?: boolean;
}) {
  return (
    <div>
      <label htmlFor={id} className="mb-1 block text-sm font-semibold text-ink-800">
        {label}
        {required ? <span className="ml-1 text-alarm-600">*</span> : null}
      </label>
      {children}
      {hint ? (
        <p id={`${id}-hint`} className="mt-1 text-xs text-ink-500">
          {hint}
        </p>
      ) : null}
      {error ? (
        <p id={`${id}-error`} role="alert" className="mt-1 text-sm font-semibold text-alarm-600">
          {error}
        </p>
      ) : null}
    </div>
  );
}

function Segmented<T extends string>({
  name,
  legend,
  value,
  options,
  onChange,
  disabled,
}: {
  name: string;
  legend: string;
  value: T;
  options: { value: T; label: string }[];
  onChange: (v: T) => void;
  disabled?: boolean;
}) {
  return (
    <fieldset>
      <legend className="mb-1 text-sm font-semibold text-ink-800">{legend}</legend>
      <div className="flex rounded-lg border border-ink-300 bg-white p-0.5">
        {options.map((o) => (
          <label
            key={o.value}
            className={`flex min-h-10 flex-1 cursor-pointer items-center justify-center rounded-md px-2 text-sm font-semibold has-[:focus-visible]:ring-2 has-[:focus-visible]:ring-kiln-400 ${
              value === o.value ? "bg-ink-800 text-white" : "text-ink-700 hover:bg-ink-100"
            }`}
          >
            <input
              type="radio"
              className="sr-only"
              name={name}
              value={o.value}
              checked={value === o.value}
              onChange={() => onChange(o.value)}
              disabled={disabled}
            />
            {o.label}
          </label>
        ))}
      </div>
    </fieldset>
  );
}

/** Capture settings of one trace: the scope as the tech had it, and what it was connected to. */
export function CaptureSettingsForm(props: Props) {
  const { draft } = props;
  const ignition = draft.kind === "secondary-ignition" || draft.probe === "capacitive-secondary";
  return (
    <div className="space-y-4">
      {ignition ? <SafetyCaution /> : null}
      <WhatItShowsFields {...props} />
      <ProbeFields {...props} />
      <ScreenFields {...props} />
      <TriggerFields {...props} />
      <SamplingFields {...props} />
    </div>
  );
}

/** The helpers every section shares: field ids, setting one value, the a11y attributes, the "guessed" hint. */
function formKit({ idPrefix, draft, onChange, errors, fromFile }: Props) {
  const id = (f: string) => `${idPrefix}-${f}`;
  const set = <K extends keyof SettingsDraft>(k: K, v: SettingsDraft[K]) => onChange({ ...draft, [k]: v });
  const a11y = (f: SettingsField, hint = false) => ({
    "aria-invalid": errors[f] ? true : undefined,
    "aria-describedby":
      [hint ? `${id(f)}-hint` : null, errors[f] ? `${id(f)}-error` : null].filter(Boolean).join(" ") || undefined,
  });
  const guessedHint = (k: keyof SettingsDraft) =>
    fromFile.includes(k) ? "Guessed from the file — set it to what the scope showed." : undefined;
  return { id, set, a11y, guessedHint };
}

/** What the capture shows: its kind, where it was taken, the engine's layout. */
function WhatItShowsFields(p: Props) {
  const { id, set, a11y, guessedHint } = formKit(p);
  const { draft, errors, disabled, guess, onChange } = p;
  return (
    <fieldset className="grid gap-3 sm:grid-cols-2 lg:grid-cols-3" disabled={disabled}>
      <legend className="mb-2 text-sm font-bold uppercase tracking-wide text-ink-500">What it shows</legend>
      <Field
        id={id("kind")}
        label="Kind of capture"
        hint={
          draft.kind === guess.kind ? (
            <>Suggested: {guess.reason}.</>
          ) : (
            <>
              Suggested: {kindLabels[guess.kind]} ({guess.reason}).{" "}
              <button
                type="button"
                className="font-semibold text-kiln-700 underline"
                onClick={() => onChange(withKind(draft, guess.kind))}
              >
                Use it
              </button>
            </>
          )
        }
      >
        <select
          id={id("kind")}
          className={input}
          value={draft.kind}
          onChange={(e) => onChange(withKind(draft, e.target.value as TraceKind))}
          aria-describedby={`${id("kind")}-hint`}
        >
          {traceKinds.map((k) => (
            <option key={k} value={k}>
              {kindLabels[k]}
            </option>
          ))}
        </select>
      </Field>
      <Field
        id={id("cylinder")}
        label="Cylinder"
        error={errors.cylinder}
        hint={
          guessedHint("cylinder") ?? (draft.kind === "secondary-ignition" ? "Needed to compare cylinders." : undefined)
        }
      >
        <input
          id={id("cylinder")}
          className={input}
          inputMode="numeric"
          value={draft.cylinder}
          onChange={(e) => set("cylinder", e.target.value)}
          placeholder="1–16"
          {...a11y("cylinder", true)}
        />
      </Field>
      <Field id={id("coil")} label="Coil" error={errors.coil} hint={guessedHint("coil")}>
        <input
          id={id("coil")}
          className={input}
          inputMode="numeric"
          value={draft.coil}
          onChange={(e) => set("coil", e.target.value)}
          placeholder="1–16"
          {...a11y("coil", !!guessedHint("coil"))}
        />
      </Field>
      <Field id={id("circuit")} label="Circuit" error={errors.circuit}>
        <input
          id={id("circuit")}
          className={input}
          value={draft.circuit}
          onChange={(e) => set("circuit", e.target.value)}
          placeholder="e.g. coil 3 primary, injector 2 control"
          maxLength={120}
          {...a11y("circuit")}
        />
      </Field>
      <Field id={id("sensor")} label="Sensor" error={errors.sensor}>
        <input
          id={id("sensor")}
          className={input}
          value={draft.sensor}
          onChange={(e) => set("sensor", e.target.value)}
          placeholder="e.g. crank position sensor"
          maxLength={120}
          {...a11y("sensor")}
        />
      </Field>
      {draft.kind === "secondary-ignition" || draft.kind === "relative-compression" || draft.kind === "injector" ? (
        <Field
          id={id("cylinders")}
          label="Engine cylinders"
          error={errors.cylinders}
          hint="Used for rpm and the compression sequence."
        >
          <input
            id={id("cylinders")}
            className={input}
            inputMode="numeric"
            value={draft.cylinders}
            onChange={(e) => set("cylinders", e.target.value)}
            placeholder="e.g. 4"
            {...a11y("cylinders", true)}
          />
        </Field>
      ) : null}
      {draft.kind === "secondary-ignition" ? (
        <label className="flex min-h-11 cursor-pointer items-center gap-3 self-end rounded-lg border border-ink-200 bg-white px-3 text-sm font-semibold">
          <input
            type="checkbox"
            className="h-5 w-5 accent-kiln-600"
            checked={draft.wasteSpark}
            onChange={(e) => set("wasteSpark", e.target.checked)}
          />
          Waste-spark coil (fires every turn)
        </label>
      ) : null}
      {draft.kind === "secondary-ignition" ? (
        <label className="flex min-h-11 cursor-pointer items-center gap-3 self-end rounded-lg border border-ink-200 bg-white px-3 text-sm font-semibold">
          <input
            type="checkbox"
            className="h-5 w-5 accent-kiln-600"
            checked={draft.everyCylinder}
            onChange={(e) => set("everyCylinder", e.target.checked)}
          />
          Pickup sees every cylinder (distributor coil wire)
        </label>
      ) : null}
    </fieldset>
  );
}

/** The probe or pickup and its scale. */
function ProbeFields(p: Props) {
  const { id, set, a11y } = formKit(p);
  const { draft, errors, disabled } = p;
  return (
    <fieldset className="grid gap-3 sm:grid-cols-2 lg:grid-cols-3" disabled={disabled}>
      <legend className="mb-2 text-sm font-bold uppercase tracking-wide text-ink-500">Probe</legend>
      <Field id={id("probe")} label="Probe or pickup">
        <select
          id={id("probe")}
          className={input}
          value={draft.probe}
          onChange={(e) => set("probe", e.target.value as SettingsDraft["probe"])}
        >
          {probeKinds.map((p) => (
            <option key={p} value={p}>
              {probeLabels[p]}
            </option>
          ))}
        </select>
      </Field>
      {draft.probe === "capacitive-secondary" ? (
        <Field
          id={id("kvPerVolt")}
          label="Pickup scale (kV per volt)"
          error={errors.kvPerVolt}
          hint="Optional. Without it, heights stay in volts at the scope."
        >
          <input
            id={id("kvPerVolt")}
            className={input}
            inputMode="decimal"
            value={draft.kvPerVolt}
            onChange={(e) => set("kvPerVolt", e.target.value)}
            placeholder="e.g. 10"
            {...a11y("kvPerVolt", true)}
          />
        </Field>
      ) : null}
      {draft.probe === "current-clamp" ? (
        <Field
          id={id("mvPerAmp")}
          label="Clamp scale (mV per amp)"
          required
          error={errors.mvPerAmp}
          hint="As set on the clamp's range switch."
        >
          <input
            id={id("mvPerAmp")}
            className={input}
            inputMode="decimal"
            value={draft.mvPerAmp}
            onChange={(e) => set("mvPerAmp", e.target.value)}
            {...a11y("mvPerAmp", true)}
          />
        </Field>
      ) : null}
    </fieldset>
  );
}

/** The screen: vertical and time scales, ground offset, coupling. */
function ScreenFields(p: Props) {
  const { id, set, a11y, guessedHint } = formKit(p);
  const { draft, errors, disabled, unit } = p;
  return (
    <fieldset className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4" disabled={disabled}>
      <legend className="mb-2 text-sm font-bold uppercase tracking-wide text-ink-500">Screen</legend>
      <Field
        id={id("voltsPerDiv")}
        label={`Vertical (${unit}/div)`}
        required
        error={errors.voltsPerDiv}
        hint={guessedHint("voltsPerDiv")}
      >
        <input
          id={id("voltsPerDiv")}
          className={input}
          inputMode="decimal"
          value={draft.voltsPerDiv}
          onChange={(e) => set("voltsPerDiv", e.target.value)}
          {...a11y("voltsPerDiv", !!guessedHint("voltsPerDiv"))}
        />
      </Field>
      <Field
        id={id("timePerDiv")}
        label="Time / div"
        required
        error={errors.timePerDivS}
        hint={guessedHint("timePerDiv")}
      >
        <div className="flex gap-2">
          <input
            id={id("timePerDiv")}
            className={input}
            inputMode="decimal"
            value={draft.timePerDiv}
            onChange={(e) => set("timePerDiv", e.target.value)}
            aria-invalid={errors.timePerDivS ? true : undefined}
            aria-describedby={
              [
                guessedHint("timePerDiv") ? `${id("timePerDiv")}-hint` : "",
                errors.timePerDivS ? `${id("timePerDiv")}-error` : "",
              ]
                .join(" ")
                .trim() || undefined
            }
          />
          <select
            aria-label="Time unit"
            className={`${inputBase} w-20 flex-none`}
            value={draft.timeUnit}
            onChange={(e) => set("timeUnit", e.target.value as SettingsDraft["timeUnit"])}
          >
            {(Object.keys(timeUnits) as (keyof typeof timeUnits)[]).map((u) => (
              <option key={u} value={u}>
                {u === "us" ? "µs" : u}
              </option>
            ))}
          </select>
        </div>
      </Field>
      <Field
        id={id("groundOffsetDiv")}
        label="Ground offset (div)"
        error={errors.groundOffsetDiv}
        hint={guessedHint("groundOffsetDiv") ?? "From the centre, + is up; −4 to +4."}
      >
        <input
          id={id("groundOffsetDiv")}
          className={input}
          type="number"
          step={0.5}
          min={-4}
          max={4}
          value={draft.groundOffsetDiv}
          onChange={(e) => set("groundOffsetDiv", e.target.value)}
          {...a11y("groundOffsetDiv", true)}
        />
      </Field>
      <Segmented
        name={id("coupling")}
        legend="Coupling"
        value={draft.coupling}
        options={[
          { value: "dc", label: "DC" },
          { value: "ac", label: "AC" },
        ]}
        onChange={(v) => set("coupling", v)}
        disabled={disabled}
      />
    </fieldset>
  );
}

/** The trigger: source, level, mode and slope. */
function TriggerFields(p: Props) {
  const { id, set, a11y } = formKit(p);
  const { draft, errors, disabled, channelNames, unit } = p;
  return (
    <fieldset className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4" disabled={disabled}>
      <legend className="mb-2 text-sm font-bold uppercase tracking-wide text-ink-500">Trigger</legend>
      <Field id={id("triggerSource")} label="Source" error={errors.triggerSource}>
        <input
          id={id("triggerSource")}
          className={input}
          list={id("sources")}
          value={draft.triggerSource}
          onChange={(e) => set("triggerSource", e.target.value)}
          maxLength={40}
          {...a11y("triggerSource")}
        />
        <datalist id={id("sources")}>
          {[...new Set([...channelNames, "A", "B", "C", "D", "Ext"])].map((n) => (
            <option key={n} value={n} />
          ))}
        </datalist>
      </Field>
      <Field id={id("triggerLevel")} label={`Level (${unit})`} error={errors.triggerLevel} hint="Optional.">
        <input
          id={id("triggerLevel")}
          className={input}
          inputMode="decimal"
          value={draft.triggerLevel}
          onChange={(e) => set("triggerLevel", e.target.value)}
          {...a11y("triggerLevel", true)}
        />
      </Field>
      <Segmented
        name={id("triggerMode")}
        legend="Mode"
        value={draft.triggerMode}
        options={[
          { value: "auto", label: "Auto" },
          { value: "normal", label: "Normal" },
          { value: "single", label: "Single" },
        ]}
        onChange={(v) => set("triggerMode", v)}
        disabled={disabled}
      />
      <Segmented
        name={id("triggerSlope")}
        legend="Slope"
        value={draft.triggerSlope}
        options={[
          { value: "rising", label: "Rising" },
          { value: "falling", label: "Falling" },
        ]}
        onChange={(v) => set("triggerSlope", v)}
        disabled={disabled}
      />
    </fieldset>
  );
}

/** The sample rate, needed only when the file has no time column. */
function SamplingFields(p: Props) {
  const { id, set } = formKit(p);
  const { draft, errors, disabled, needsRate, rateFromFile } = p;
  return (
    <fieldset className="grid gap-3 sm:grid-cols-2" disabled={disabled}>
      <legend className="mb-2 text-sm font-bold uppercase tracking-wide text-ink-500">Sampling</legend>
      <Field
        id={id("sampleRate")}
        label="Sample rate"
        required={needsRate}
        error={errors.sampleRateHz}
        hint={
          needsRate
            ? "Required: this file has no time column."
            : rateFromFile
              ? "Not needed: the file gives the timing. Leave empty."
              : "Only needed when the file has no time column."
        }
      >
        <div className="flex gap-2">
          <input
            id={id("sampleRate")}
            className={input}
            inputMode="decimal"
            value={draft.sampleRate}
            onChange={(e) => set("sampleRate", e.target.value)}
            aria-invalid={errors.sampleRateHz ? true : undefined}
            aria-describedby={`${id("sampleRate")}-hint${errors.sampleRateHz ? ` ${id("sampleRate")}-error` : ""}`}
            aria-required={needsRate || undefined}
          />
          <select
            aria-label="Sample rate unit"
            className={`${inputBase} w-28 flex-none`}
            value={draft.rateUnit}
            onChange={(e) => set("rateUnit", e.target.value as SettingsDraft["rateUnit"])}
          >
            {(Object.keys(rateUnits) as (keyof typeof rateUnits)[]).map((u) => (
              <option key={u} value={u}>
                {u}
              </option>
            ))}
          </select>
        </div>
      </Field>
    </fieldset>
  );
}
