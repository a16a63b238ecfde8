import type { DataRequest } from "../../../../shared/schemas/realtime";
import { requestParts } from "../lib/describe-request";

/** The caution carried by every request for a capture (test advice). */
export const CAPTURE_CAUTION =
  "Secondary ignition is tens of kilovolts: switch the ignition off before placing or moving a pickup and keep hands and leads clear of coils and plug wires while the engine runs. Follow the vehicle maker's procedure, local codes and licensed practice.";

/** A request for more data as the tech reads it: which capture, which cylinder, which settings. */
export function DataRequestCard({
  request,
  text,
  authorName,
}: {
  request: DataRequest;
  text?: string;
  authorName?: string | null;
}) {
  const parts = requestParts(request);
  const s = request.settings ?? {};
  const rows: [string, string][] = [["Capture", parts[0]]];
  if (request.cylinder != null) rows.push(["Cylinder", String(request.cylinder)]);
  const settings = parts.slice(request.cylinder != null ? 2 : 1);
  if (settings.length) rows.push(["Settings", settings.join(", ")]);
  if (request.conditions) rows.push(["Conditions", request.conditions]);
  return (
    <div className="rounded-lg border-2 border-kiln-300 bg-kiln-50 p-3" aria-label="Request for more data">
      <p className="text-sm font-bold text-kiln-700">
        {authorName ? `${authorName} asks for another capture` : "Another capture is requested"}
      </p>
      <dl className="mt-2 grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-sm">
        {rows.map(([k, v]) => (
          <div key={k} className="contents">
            <dt className="font-semibold text-ink-700">{k}</dt>
            <dd className="text-ink-900">{v}</dd>
          </div>
        ))}
      </dl>
      {text ? <p className="mt-2 whitespace-pre-wrap text-sm text-ink-900">{text}</p> : null}
      {Object.keys(s).length || request.capture === "secondary-ignition" ? (
        <p role="note" className="mt-2 border-l-4 border-alarm-500 pl-2 text-xs text-ink-700">
          <span className="font-bold text-alarm-600">Safety. </span>
          {CAPTURE_CAUTION}
        </p>
      ) : null}
    </div>
  );
}
