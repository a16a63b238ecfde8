import { useMemo, useState } from "react";
import type { CaseDetail, CaseTrace } from "../../../features/cases/api/types";
import { traceKindName, traceLabel } from "../../../features/cases/components/trace-list";
import { TraceSettingsSummary } from "../../../features/cases/components/trace-settings-summary";
import { ComparisonTable } from "../../../features/analysis/components/comparison-table";
import { ComparisonChart } from "../../../features/analysis/components/comparison-chart";
import { CompressionChart } from "../../../features/analysis/components/compression-chart";
import { FindingsList } from "../../../features/analysis/components/findings-list";
import { MeasurementsTable } from "../../../features/analysis/components/measurements-table";
import { comparisonFor } from "../../../features/analysis/lib/comparison";
import { isAnalysisResult } from "../../../features/analysis/lib/metrics";
import { TraceViewer } from "../../../features/traces/components/trace-viewer";
import { TraceUnitsNote, TraceWarnings } from "../../../features/traces/components/trace-details";
import { sharedUnits, traceUnits } from "../../../lib/trace-units";
import type { TraceInfo } from "../../../features/traces/types";

/** A case's trace as the viewer takes it (the settings are checked by the server at upload). */
export function viewerInfo(t: CaseTrace): TraceInfo {
  return {
    id: t.id,
    name: `${traceLabel(t)}${traceLabel(t) !== t.name ? ` · ${t.name}` : ""}`,
    samples: t.samples,
    sampleRateHz: t.sampleRateHz,
    durationS: t.durationS,
    t0: t.t0,
    channels: t.channels,
    settings: t.settings as unknown as TraceInfo["settings"],
    analysis: (t.analysis as TraceInfo["analysis"]) ?? null,
  };
}

function TraceCard({ t, flagged, onDelete }: { t: CaseTrace; flagged?: boolean; onDelete?: () => void }) {
  const analysis = isAnalysisResult(t.analysis) ? t.analysis : null;
  const info = useMemo(() => [viewerInfo(t)], [t]);
  const label = traceLabel(t);
  const units = useMemo(() => traceUnits(t), [t]);
  return (
    <article
      aria-labelledby={`trace-${t.id}`}
      className="space-y-4 rounded-xl border border-ink-200 bg-white p-4 shadow-sm sm:p-5"
    >
      <header className="flex flex-wrap items-start gap-x-3 gap-y-2">
        <div className="min-w-0 flex-1">
          <h3 id={`trace-${t.id}`} className="text-lg font-bold text-ink-900">
            {label}
            {flagged ? (
              <span className="ml-2 rounded bg-alarm-500 px-1.5 py-0.5 align-middle text-xs font-bold text-white">
                look here first
              </span>
            ) : null}
            {label !== t.name ? (
              <>
                <span className="sr-only"> · </span>
                <span className="ml-2 text-sm font-normal text-ink-500">{t.name}</span>
              </>
            ) : null}
          </h3>
          <p className="text-sm text-ink-600">
            {traceKindName(t.kind)} · {t.samples.toLocaleString("en-US")} samples
          </p>
        </div>
        {t.originalUrl ? (
          <a
            href={t.originalUrl}
            className="min-h-11 content-center rounded-lg px-3 text-sm font-semibold text-ink-700 hover:bg-ink-100"
            download
          >
            Original file
          </a>
        ) : null}
        {onDelete ? (
          <button
            type="button"
            onClick={onDelete}
            className="min-h-11 rounded-lg px-3 text-sm font-semibold text-alarm-600 hover:bg-alarm-500/10"
          >
            Remove
          </button>
        ) : null}
      </header>
      <TraceSettingsSummary settings={t.settings} units={units} />
      <TraceUnitsNote trace={t} />
      <TraceWarnings warnings={t.warnings} />

      <TraceViewer traces={info} />

      {analysis?.kind === "relative-compression" ? <CompressionChart summary={analysis.summary} /> : null}
      {analysis ? (
        <div className="grid gap-4 xl:grid-cols-2">
          <section aria-label={`Findings for ${label}`} className="min-w-0 space-y-2">
            <h4 className="font-bold text-ink-800">Capture review</h4>
            <FindingsList findings={analysis.findings} ignition={analysis.kind === "secondary-ignition"} />
          </section>
          <section aria-label={`Measurements of ${label}`} className="min-w-0 space-y-2">
            <h4 className="font-bold text-ink-800">Measurements</h4>
            <MeasurementsTable analysis={analysis} traceName={label} units={units} />
          </section>
        </div>
      ) : (
        <p className="text-sm text-ink-600">No measurements stored for this trace.</p>
      )}
    </article>
  );
}

/**
 * The traces of a case: the comparison (a table beside its bar charts), the overlay (opened zoomed
 * on the firing events), then each trace with its viewer, review and measurements.
 */
export function CaseTraces({
  c,
  flaggedTraceId,
  onDeleteTrace,
}: {
  c: CaseDetail;
  flaggedTraceId?: string;
  onDeleteTrace?: (t: CaseTrace) => void;
}) {
  const [overlay, setOverlay] = useState(false);
  const comparison = useMemo(() => comparisonFor(c.comparison, c.traces), [c.comparison, c.traces]);
  const overlayInfo = useMemo(() => c.traces.map(viewerInfo), [c.traces]);
  const labels = c.traces.map((t) => ({ id: t.id, label: traceLabel(t) }));
  const units = useMemo(() => sharedUnits(c.traces), [c.traces]);

  if (!c.traces.length) return <p className="text-ink-600">No traces on this case yet.</p>;
  return (
    <div className="space-y-5">
      {comparison ? (
        <section
          aria-labelledby="comparison-title"
          className="space-y-3 rounded-xl border border-ink-200 bg-white p-4 shadow-sm sm:p-5"
        >
          <h3 id="comparison-title" className="text-lg font-bold">
            Cylinder to cylinder
          </h3>
          <ComparisonTable
            comparison={comparison}
            traces={labels}
            units={units}
            aside={<ComparisonChart comparison={comparison} traces={labels} units={units} />}
          />
        </section>
      ) : null}

      {c.traces.length > 1 ? (
        <section aria-label="All traces overlaid" className="space-y-3">
          <button
            type="button"
            className="min-h-11 rounded-lg border border-ink-300 bg-white px-4 font-semibold text-ink-800 hover:bg-ink-50"
            aria-expanded={overlay}
            onClick={() => setOverlay((o) => !o)}
          >
            {overlay ? "Hide the overlay" : `Overlay all ${c.traces.length} traces`}
          </button>
          {overlay ? (
            <div className="rounded-xl border border-ink-200 bg-white p-3 shadow-sm">
              <TraceViewer traces={overlayInfo} mode="overlay" />
            </div>
          ) : null}
        </section>
      ) : null}

      {c.traces.map((t) => (
        <TraceCard
          key={t.id}
          t={t}
          flagged={t.id === flaggedTraceId}
          onDelete={onDeleteTrace ? () => onDeleteTrace(t) : undefined}
        />
      ))}
    </div>
  );
}
