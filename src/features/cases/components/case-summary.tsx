import { decodeVin, validateVin } from "../../../../shared/domain/vin";
import {
  fuelLabels,
  symptomLabels,
  transmissionLabels,
  type Fuel,
  type Symptom,
  type Transmission,
} from "../../../../shared/schemas/case";
import { codeStrings, type CaseDetail } from "../api/types";
import { loadLabels, occurrenceLabels, systemLabels, temperatureLabels, vehicleTitle } from "../lib/labels";
import { CodeChip } from "./code-chips";

function Row({ label, children }: { label: string; children: React.ReactNode }) {
  return (
    <div className="min-w-0">
      <dt className="text-xs font-semibold uppercase tracking-wide text-ink-500">{label}</dt>
      <dd className="mt-0.5 break-words text-ink-900">{children}</dd>
    </div>
  );
}

const dash = <span className="text-ink-400">—</span>;

/** The vehicle as entered, with what the VIN itself says (model year, region, check digit). */
export function VehicleSummary({ c }: { c: CaseDetail }) {
  const v = c.vehicle;
  const vin = v.vin ?? "";
  const check = vin ? validateVin(vin) : null;
  let decoded: ReturnType<typeof decodeVin> | null = null;
  if (check && check.errors.length === 0) decoded = decodeVin(vin);
  return (
    <div className="space-y-4">
      <dl className="grid grid-cols-2 gap-x-4 gap-y-3 sm:grid-cols-3 lg:grid-cols-4">
        <div className="col-span-2">
          <Row label="Vehicle">{vehicleTitle(v)}</Row>
        </div>
        <div className="col-span-2">
          <Row label="VIN">
            {vin ? <span className="break-all font-mono">{vin}</span> : dash}
            {decoded ? (
              <span className="block text-sm text-ink-600">
                Model year {decoded.modelYear ?? decoded.modelYearCandidates.join(" or ")} ·{" "}
                {decoded.region === "unknown" ? "unknown region" : `built in ${decoded.region}`} · maker code{" "}
                <span className="font-mono">{decoded.manufacturerCode}</span>
              </span>
            ) : null}
            {decoded && !decoded.checkDigitValid ? (
              <span className="block text-sm font-semibold text-kiln-700">
                Check digit does not match{v.vinCheckOverride ? " — kept as written by the technician" : ""}.
              </span>
            ) : null}
          </Row>
        </div>
        <Row label="Engine">{v.engine || dash}</Row>
        <Row label="Fuel">{v.fuel ? (fuelLabels[v.fuel as Fuel] ?? v.fuel) : dash}</Row>
        <Row label="Mileage">
          {v.mileage !== null && v.mileage !== undefined
            ? `${v.mileage.toLocaleString("en-US")} ${v.mileageUnit ?? "mi"}`
            : dash}
        </Row>
        <Row label="Transmission">
          {v.transmission ? (transmissionLabels[v.transmission as Transmission] ?? v.transmission) : dash}
        </Row>
      </dl>
      <div>
        <h3 className="text-xs font-semibold uppercase tracking-wide text-ink-500">Trouble codes</h3>
        {c.codes?.length ? (
          <ul className="mt-1 grid gap-2 sm:grid-cols-2">
            {codeStrings(c.codes).map((code) => (
              <CodeChip key={code} code={code} />
            ))}
          </ul>
        ) : (
          <p className="mt-1 text-ink-600">No codes entered.</p>
        )}
      </div>
    </div>
  );
}

/** Complaint, symptoms, conditions and what has been done so far. */
export function CaseFacts({ c }: { c: CaseDetail }) {
  const cond = c.conditions ?? {};
  const conditions = [
    cond.temperature && cond.temperature !== "any" ? temperatureLabels[cond.temperature] : null,
    ...(cond.load ?? []).filter((l) => l !== "any").map((l) => loadLabels[l] ?? l),
    cond.occurrence ? occurrenceLabels[cond.occurrence] : null,
  ].filter(Boolean) as string[];
  return (
    <dl className="grid gap-4 md:grid-cols-2">
      <div className="md:col-span-2">
        <Row label="Complaint">{c.complaint ? <span className="whitespace-pre-line">{c.complaint}</span> : dash}</Row>
      </div>
      <Row label="System">{c.system ? systemLabels[c.system] : dash}</Row>
      <Row label="When it happens">{conditions.length ? conditions.join(" · ") : "Any conditions"}</Row>
      <div className="md:col-span-2">
        <Row label="Symptoms">
          {c.symptoms?.length ? (
            <span className="flex flex-wrap gap-1.5">
              {c.symptoms.map((s) => (
                <span key={s} className="rounded-full bg-ink-100 px-2.5 py-0.5 text-sm text-ink-800">
                  {symptomLabels[s as Symptom] ?? s}
                </span>
              ))}
            </span>
          ) : (
            dash
          )}
        </Row>
      </div>
      <Row label="Tests done">{c.testsDone ? <span className="whitespace-pre-line">{c.testsDone}</span> : dash}</Row>
      <Row label="Parts replaced">
        {c.partsReplaced ? <span className="whitespace-pre-line">{c.partsReplaced}</span> : dash}
      </Row>
      {c.notes ? (
        <div className="md:col-span-2">
          <Row label="Notes">
            <span className="whitespace-pre-line">{c.notes}</span>
          </Row>
        </div>
      ) : null}
    </dl>
  );
}
