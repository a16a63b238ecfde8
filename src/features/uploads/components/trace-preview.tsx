import type { TracePreview } from "../lib/preview";
import { count, si } from "../lib/format";
import { Sparkline } from "./sparkline";

/** What the browser read from the file before upload: size of the capture, its timing, its channels. */
export function TracePreviewPanel({ preview, fileName }: { preview: TracePreview; fileName: string }) {
  if (!preview.ok) {
    return (
      <div
        role="alert"
        className={`rounded-lg border px-3 py-2 text-sm ${preview.needsRate ? "border-kiln-300 bg-kiln-50 text-ink-800" : "border-alarm-500 bg-white text-alarm-600"}`}
      >
        <p className="font-semibold">
          {preview.needsRate ? "Sample rate needed" : "This file cannot be read"}
          {preview.line !== null ? ` (line ${preview.line})` : ""}
        </p>
        <p className="text-ink-800">{capital(stripLine(preview.message))}</p>
      </div>
    );
  }
  const t = preview.trace;
  const approx = preview.partial ? "≈ " : "";
  const duration = (t.durationS * preview.estimatedSamples) / t.samples;
  return (
    <div className="space-y-2">
      <Sparkline trace={t} label={`Preview of ${fileName}: ${t.channels.map((c) => c.name).join(", ")}`} />
      <dl className="grid grid-cols-2 gap-x-4 gap-y-1 text-sm sm:grid-cols-4">
        <div>
          <dt className="text-ink-500">Samples</dt>
          <dd className="font-semibold">
            {approx}
            {count(preview.estimatedSamples)}
          </dd>
        </div>
        <div>
          <dt className="text-ink-500">Sample rate</dt>
          <dd className={`font-semibold ${preview.placeholderRate ? "text-kiln-700" : ""}`}>
            {preview.placeholderRate ? "needed" : si(t.sampleRateHz, "S/s")}
            {!preview.placeholderRate && !preview.rateFromFile ? " (stated)" : ""}
          </dd>
        </div>
        <div>
          <dt className="text-ink-500">Duration</dt>
          <dd className="font-semibold">{preview.placeholderRate ? "—" : `${approx}${si(duration, "s")}`}</dd>
        </div>
        <div>
          <dt className="text-ink-500">Time column</dt>
          <dd className="font-semibold">{preview.noTimeColumn ? "none" : t.time ? "uneven" : "yes"}</dd>
        </div>
      </dl>
      <ul className="flex flex-wrap gap-2 text-xs" aria-label="Channels">
        {t.channels.map((c) => (
          <li key={c.name} className="rounded bg-ink-100 px-2 py-1 text-ink-700">
            <span className="font-semibold">{c.name}</span>
            {c.unit ? ` (${c.unit})` : ""}: {fmt(c.min)} to {fmt(c.max)}
          </li>
        ))}
      </ul>
      {preview.partial ? (
        <p className="text-xs text-ink-500">Preview of the first 2 MB; the server reads the whole file.</p>
      ) : null}
      {t.warnings.length ? (
        <ul className="space-y-0.5 text-xs text-kiln-700">
          {t.warnings.slice(0, 4).map((w) => (
            <li key={w}>{capital(w)}</li>
          ))}
        </ul>
      ) : null}
    </div>
  );
}

const fmt = (x: number) =>
  Math.abs(x) >= 1000 || (Math.abs(x) < 0.01 && x !== 0) ? x.toExponential(2) : Number(x.toPrecision(4)).toString();
const capital = (s: string) => s.charAt(0).toUpperCase() + s.slice(1);
const stripLine = (s: string) => s.replace(/^line \d+:\s*/i, "");
