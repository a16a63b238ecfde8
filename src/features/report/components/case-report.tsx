import { formatDate, formatNumber } from "../../../../shared/format";
import type { ReportAnnotation, ReportAnswer, ReportCase } from "../api/get-report";
import { TraceFigure } from "./trace-figure";

/** The cautions printed on every report (common practice, no source). */
export const REPORT_CAUTIONS = [
  "The ignition secondary carries tens of kilovolts (tens of thousands of volts). Tests on it are for trained technicians with insulated tools and proper pickups; keep clear of coil and plug leads while the engine runs.",
  "Follow the vehicle manufacturer's procedures, local codes and licensed practice. This report describes what was measured and found; it does not replace them.",
  "Keep clear of moving parts, and disable fuel and ignition as the maker directs before any cranking test.",
];

function vehicleLine(v: ReportCase["vehicle"]): string {
  return [v.year, v.make, v.model, v.engine].filter((x) => x != null && String(x).trim() !== "").join(" ") || "Vehicle";
}

/**
 * The report for the vehicle's owner: the vehicle, the complaint, the annotated traces as
 * figures, the diagnosis, the repair and the cautions. Laid out for paper by the print styles.
 */
export function CaseReport({
  c,
  answer,
  annotations,
}: {
  c: ReportCase;
  answer: ReportAnswer | null;
  annotations: ReportAnnotation[];
}) {
  const codes = c.codes.map((x) => (typeof x === "string" ? { code: x, description: null } : x));
  const live = annotations.filter((a) => !a.deletedAt);
  const printed = formatDate(new Date());
  return (
    <article className="report mx-auto max-w-3xl space-y-6 bg-white p-6 text-ink-900 shadow-sm print:max-w-none print:p-0 print:shadow-none">
      <header className="border-b border-ink-300 pb-3">
        <p className="text-sm uppercase tracking-wide text-ink-500">Diagnostic report · {printed}</p>
        <h1 className="text-2xl font-bold">{vehicleLine(c.vehicle)}</h1>
        <dl className="mt-2 grid grid-cols-2 gap-x-6 gap-y-1 text-sm sm:grid-cols-3">
          {c.vehicle.vin ? (
            <div>
              <dt className="text-ink-500">VIN</dt>
              <dd className="font-mono">{c.vehicle.vin}</dd>
            </div>
          ) : null}
          {c.vehicle.mileage != null ? (
            <div>
              <dt className="text-ink-500">Mileage</dt>
              <dd>
                {formatNumber(c.vehicle.mileage)} {c.vehicle.mileageUnit ?? ""}
              </dd>
            </div>
          ) : null}
          {c.vehicle.fuel ? (
            <div>
              <dt className="text-ink-500">Fuel</dt>
              <dd>{c.vehicle.fuel}</dd>
            </div>
          ) : null}
        </dl>
      </header>

      <section className="break-inside-avoid">
        <h2 className="text-lg font-bold">The complaint</h2>
        <p className="whitespace-pre-line">{c.complaint || "—"}</p>
        {codes.length ? (
          <ul className="mt-2 text-sm">
            {codes.map((x) => (
              <li key={x.code}>
                <span className="font-mono font-semibold">{x.code}</span>
                {x.description ? ` — ${x.description}` : ""}
              </li>
            ))}
          </ul>
        ) : null}
      </section>

      {c.traces.length ? (
        <section className="space-y-4">
          <h2 className="text-lg font-bold">What the scope showed</h2>
          {c.traces.map((t, i) => (
            <TraceFigure key={t.id} trace={t} index={i} marks={live.filter((a) => a.traceId === t.id)} />
          ))}
        </section>
      ) : null}

      {answer ? (
        <section className="break-inside-avoid space-y-3">
          <h2 className="text-lg font-bold">Diagnosis</h2>
          <p className="whitespace-pre-line">{answer.diagnosis}</p>
          <h3 className="font-bold">Cause</h3>
          <p className="whitespace-pre-line">{answer.rootCause}</p>
          <h3 className="font-bold">Repair</h3>
          <p className="whitespace-pre-line">{answer.recommendedFix}</p>
          {answer.testsToConfirm ? (
            <>
              <h3 className="font-bold">How the repair is checked</h3>
              <p className="whitespace-pre-line">{answer.testsToConfirm}</p>
            </>
          ) : null}
        </section>
      ) : (
        <p className="text-ink-600">No diagnosis has been written for this case yet.</p>
      )}

      <section className="break-inside-avoid rounded border border-kiln-400 p-3">
        <h2 className="font-bold">Safety</h2>
        <ul className="mt-1 list-disc space-y-1 pl-5 text-sm">
          {REPORT_CAUTIONS.map((x) => (
            <li key={x}>{x}</li>
          ))}
        </ul>
      </section>
    </article>
  );
}
