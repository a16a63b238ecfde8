import { useMemo } from "react";
import { Link, useParams } from "react-router-dom";
import { useEntry } from "../../../features/casebook/api/get-entry";
import { casebookPages } from "../../../features/casebook/api/paths";
import { EntryView } from "../../../features/casebook/components/entry-view";
import { ModerationPanel } from "../../../features/casebook/components/moderation-panel";
import { Panel } from "../../../features/casebook/components/ui";
import { ComparisonTable } from "../../../features/analysis/components/comparison-table";
import { MeasurementsTable } from "../../../features/analysis/components/measurements-table";
import { comparisonFor } from "../../../features/analysis/lib/comparison";
import { isAnalysisResult } from "../../../features/analysis/lib/metrics";
import { TraceViewer } from "../../../features/traces/components/trace-viewer";
import { TraceUnitsNote } from "../../../features/traces/components/trace-details";
import { sharedUnits, traceUnits } from "../../../lib/trace-units";
import type { Annotation, TraceInfo } from "../../../features/traces/types";
import type { CasebookEntryView } from "../../../../shared/schemas/casebook";
import { ApiError } from "../../../lib/api-client";

function viewerTraces(e: CasebookEntryView): TraceInfo[] {
  return e.traces.map((t) => ({
    id: t.id,
    name: t.name,
    samples: t.samples,
    sampleRateHz: t.sampleRateHz,
    durationS: t.durationS,
    t0: t.t0,
    channels: t.channels,
    settings: t.settings as unknown as TraceInfo["settings"],
    analysis: (t.analysis as TraceInfo["analysis"]) ?? null,
  }));
}

function viewerAnnotations(e: CasebookEntryView): Annotation[] {
  return e.annotations.map((a) => ({
    id: a.id,
    traceId: a.traceId,
    kind: a.kind,
    t0: a.t0,
    t1: a.t1,
    level: a.level,
    label: a.label,
    color: a.color,
    channel: a.channel,
  }));
}

/** /casebook/:id — an entry with its traces, measurements and the expert's marks, read-only. */
export function CasebookEntryPage() {
  const { id = "" } = useParams();
  const q = useEntry(id);
  const traces = useMemo(() => (q.data ? viewerTraces(q.data) : []), [q.data]);
  const annotations = useMemo(() => (q.data ? viewerAnnotations(q.data) : []), [q.data]);

  if (q.isPending) {
    return (
      <div className="space-y-3" aria-busy="true" aria-label="Loading the entry">
        <div className="h-8 w-2/3 animate-pulse rounded bg-ink-100" />
        <div className="h-48 animate-pulse rounded-xl bg-ink-100" />
      </div>
    );
  }
  if (q.isError) {
    return (
      <div role="alert" className="rounded-xl border border-alarm-500 bg-white p-5">
        <p className="font-semibold text-alarm-600">
          {q.error instanceof ApiError && q.error.status === 404
            ? "This casebook entry does not exist or has been withdrawn."
            : `Could not load the entry: ${q.error.message}`}
        </p>
        <Link to={casebookPages.search} className="mt-3 inline-block underline">
          Back to the casebook
        </Link>
      </div>
    );
  }
  const e = q.data;
  const comparison = comparisonFor(e.comparison, e.traces);
  const labels = e.traces.map((t) => ({ id: t.id, label: t.name }));

  return (
    <div className="space-y-5">
      <Link
        to={casebookPages.search}
        className="inline-flex min-h-11 items-center text-sm font-semibold text-ink-600 hover:text-ink-900"
      >
        ← Casebook
      </Link>
      <EntryView
        entry={e}
        moderation={<ModerationPanel entry={e} />}
        measurements={
          comparison ? (
            <Panel id="comparison" title="Cylinder to cylinder">
              <ComparisonTable comparison={comparison} traces={labels} units={sharedUnits(e.traces)} />
            </Panel>
          ) : null
        }
        traces={
          traces.length ? (
            <section aria-labelledby="entry-traces" className="space-y-4">
              <h2 id="entry-traces" className="text-xl font-bold">
                Traces <span className="font-normal text-ink-500">({traces.length}, read-only)</span>
              </h2>
              <div className="rounded-xl border border-ink-200 bg-white p-3 shadow-sm">
                <TraceViewer traces={traces} annotations={annotations} readOnly />
              </div>
              <div className="grid gap-4 xl:grid-cols-2">
                {e.traces.map((t) =>
                  isAnalysisResult(t.analysis) ? (
                    <Panel key={t.id} id={`m-${t.id}`} title={t.name}>
                      <TraceUnitsNote trace={t} />
                      <MeasurementsTable analysis={t.analysis} traceName={t.name} units={traceUnits(t)} />
                    </Panel>
                  ) : null,
                )}
              </div>
            </section>
          ) : (
            <p className="text-sm text-ink-600">No traces were published with this entry.</p>
          )
        }
      />
    </div>
  );
}
