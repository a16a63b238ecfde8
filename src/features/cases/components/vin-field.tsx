import { useEffect, useMemo, useRef, useState } from "react";
import { useFormContext, useWatch } from "react-hook-form";
import { decodeVin, normalizeVin, validateVin, type VinDecoded } from "../../../../shared/domain/vin";
import type { CaseFormValues } from "../lib/form-values";
import { FieldError, inputClass, Label } from "./ui";

/**
 * VIN with live checking by 49 CFR 565: a malformed VIN is an error under the field; a check
 * digit that does not match is a warning the technician may override. The decoded model year
 * fills an empty year field; region and WMI are shown.
 */
export function VinField() {
  const { register, setValue, getValues, formState } = useFormContext<CaseFormValues>();
  const raw = useWatch<CaseFormValues, "vehicle.vin">({ name: "vehicle.vin" }) ?? "";
  const override = useWatch<CaseFormValues, "vehicle.vinCheckOverride">({ name: "vehicle.vinCheckOverride" });
  const [blurred, setBlurred] = useState(false);
  const vin = normalizeVin(raw);

  const check = useMemo(() => (vin ? validateVin(vin) : null), [vin]);
  const decoded: VinDecoded | null = useMemo(() => {
    if (!check || check.errors.length) return null;
    try {
      return decodeVin(vin);
    } catch {
      return null;
    }
  }, [check, vin]);

  // A different VIN starts without the override; a decoded year fills an empty year field.
  const lastVin = useRef(vin);
  useEffect(() => {
    if (lastVin.current === vin) return;
    lastVin.current = vin;
    if (getValues("vehicle.vinCheckOverride")) setValue("vehicle.vinCheckOverride", false, { shouldDirty: true });
    if (decoded?.modelYear && String(getValues("vehicle.year") ?? "").trim() === "") {
      setValue("vehicle.year", String(decoded.modelYear), { shouldDirty: true, shouldValidate: formState.isSubmitted });
    }
  }, [vin, decoded, getValues, setValue, formState.isSubmitted]);

  // Errors: show character problems at once, the length only once the tech has left the field.
  const liveErrors = (check?.errors ?? []).filter(
    (e) => e.code !== "empty" && (e.code !== "length" || blurred || vin.length > 17),
  );
  const schemaError = formState.errors.vehicle?.vin?.message;
  const errorText = schemaError ?? (liveErrors.length ? liveErrors.map((e) => e.message).join(" ") : undefined);
  const warning = check?.warnings.find((w) => w.code === "check-digit");
  const hintId = "case-vehicle-vin-hint";
  const errId = "case-vehicle-vin-error";

  const field = register("vehicle.vin", {
    onBlur: () => setBlurred(true),
  });

  return (
    <div className="sm:col-span-2">
      <Label htmlFor="case-vehicle-vin" optional>
        VIN
      </Label>
      <input
        id="case-vehicle-vin"
        {...field}
        className={`${inputClass} font-mono uppercase tracking-wider placeholder:normal-case placeholder:tracking-normal placeholder:font-sans`}
        autoCapitalize="characters"
        autoComplete="off"
        spellCheck={false}
        maxLength={24}
        inputMode="text"
        aria-invalid={errorText ? true : undefined}
        aria-describedby={[hintId, errorText ? errId : null].filter(Boolean).join(" ")}
        placeholder="17 characters"
      />
      <p id={hintId} className="mt-1 text-sm text-ink-500" aria-live="polite">
        {vin.length === 0
          ? "On the dash at the base of the windscreen, or on the door-pillar label. Letters I, O and Q are never used."
          : vin.length < 17
            ? `${vin.length} of 17 characters`
            : decoded
              ? null
              : null}
      </p>
      <FieldError id={errId} message={errorText} />

      {decoded ? (
        <dl
          className="mt-2 grid grid-cols-2 gap-x-4 gap-y-1 rounded-lg bg-ink-50 px-3 py-2 text-sm sm:grid-cols-4"
          aria-label="Decoded from the VIN"
        >
          <div>
            <dt className="text-ink-500">Model year</dt>
            <dd className="font-semibold">{decoded.modelYear ?? decoded.modelYearCandidates.join(" or ")}</dd>
          </div>
          <div>
            <dt className="text-ink-500">Built in</dt>
            <dd className="font-semibold">{decoded.region === "unknown" ? "Unknown region" : decoded.region}</dd>
          </div>
          <div>
            <dt className="text-ink-500">Maker code</dt>
            <dd className="font-mono font-semibold">{decoded.manufacturerCode}</dd>
          </div>
          <div>
            <dt className="text-ink-500">Check digit</dt>
            <dd className={`font-semibold ${decoded.checkDigitValid ? "text-verdigris-600" : "text-kiln-700"}`}>
              {decoded.checkDigitValid ? "Matches" : `Expected ${warning?.expected ?? "?"}`}
            </dd>
          </div>
        </dl>
      ) : null}

      {warning ? (
        <div role="status" className="mt-2 rounded-lg border border-kiln-300 bg-kiln-50 px-3 py-2 text-sm text-ink-800">
          <p>
            <span className="font-semibold text-kiln-700">Check digit warning. </span>
            {warning.message}
          </p>
          <label className="mt-2 flex min-h-11 cursor-pointer items-center gap-3 font-semibold">
            <input type="checkbox" className="h-5 w-5 accent-kiln-600" {...register("vehicle.vinCheckOverride")} />I
            checked it against the vehicle — keep this VIN
          </label>
          {override ? (
            <p className="text-verdigris-600">Kept as written; the warning is recorded on the case.</p>
          ) : null}
        </div>
      ) : null}
    </div>
  );
}
