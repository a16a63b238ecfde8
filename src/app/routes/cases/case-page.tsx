import { useMemo } from "react";
import { useQueryClient } from "@tanstack/react-query";
import { Link, useParams } from "react-router-dom";
import { useDeleteAttachment } from "../../../features/cases/api/delete-attachment";
import { caseKeys, casePages } from "../../../features/cases/api/paths";
import { useCase } from "../../../features/cases/api/get-case";
import type { CaseDetail } from "../../../features/cases/api/types";
import { CaseFacts, VehicleSummary } from "../../../features/cases/components/case-summary";
import { PhotoUploader } from "../../../features/cases/components/photo-uploader";
import { StatusBadge } from "../../../features/cases/components/status-badge";
import { buttonClass, Section } from "../../../features/cases/components/ui";
import { formatDate, vehicleTitle } from "../../../features/cases/lib/labels";
import { TraceUploader } from "../../../features/uploads/components/trace-uploader";
import { comparisonFor } from "../../../features/analysis/lib/comparison";
import { flaggedTraceId } from "../../../features/analysis/lib/flagged";
import { ApiError } from "../../../lib/api-client";
import { CaseTraces, viewerInfo } from "./case-traces";
import { LiveReview } from "./live-review";
import { CaseWorkflowPanel } from "../queue/case-workflow-panel";
import { SimilarCases } from "../../../features/casebook/components/similar-cases";

/** The states in which the case has (or had) an expert on it: the live review is shown. */
const LIVE_STATES = ["claimed", "needs_data", "answered", "resolved", "closed"];
/** The states in which the review is live: it comes first on the page, before the case's details. */
const LIVE_NOW = ["claimed", "needs_data"];

function CaseLoading() {
  return (
    <div className="space-y-3" aria-busy="true" aria-label="Loading the case">
      <div className="h-8 w-64 animate-pulse rounded bg-ink-100" />
      <div className="h-40 animate-pulse rounded-xl bg-ink-100" />
      <div className="h-64 animate-pulse rounded-xl bg-ink-100" />
    </div>
  );
}

function CaseLoadError({ e }: { e: Error }) {
  return (
    <div role="alert" className="rounded-xl border border-alarm-500 bg-white p-5">
      <p className="font-semibold text-alarm-600">
        {e instanceof ApiError && e.status === 404
          ? "This case does not exist, or it belongs to another shop."
          : e instanceof ApiError && e.status === 401
            ? "Sign in to see this case."
            : `Could not load the case: ${e.message}`}
      </p>
      <Link to={casePages.list} className="mt-3 inline-block underline">
        Back to the cases
      </Link>
    </div>
  );
}

function CaseHeader({ c, compact }: { c: CaseDetail; compact: boolean }) {
  return (
    <>
      <Link
        to={casePages.list}
        className={`inline-flex items-center text-sm font-semibold text-ink-600 hover:text-ink-900 ${compact ? "min-h-9" : "min-h-11"}`}
      >
        ← Cases
      </Link>
      <header className="flex flex-wrap items-start gap-3">
        <div className="min-w-0 flex-1">
          <div className="flex flex-wrap items-center gap-x-3 gap-y-1">
            <h1 className={`${compact ? "text-xl sm:text-2xl" : "text-2xl"} font-bold`}>{vehicleTitle(c.vehicle)}</h1>
            <StatusBadge status={c.status} />
          </div>
          <p className={`text-sm text-ink-500 ${compact ? "hidden sm:block" : ""}`}>
            Opened {formatDate(c.createdAt)} · updated {formatDate(c.updatedAt)}
          </p>
        </div>
        {c.status === "draft" && c.abilities?.edit ? (
          <Link to={casePages.edit(c.id)} className={buttonClass.primary}>
            Edit the draft
          </Link>
        ) : null}
      </header>
    </>
  );
}

function DraftNotice({ c }: { c: CaseDetail }) {
  if (c.status !== "draft" || !c.readiness || c.readiness.complete) return null;
  return (
    <div className="rounded-xl border border-kiln-300 bg-kiln-50 px-4 py-3 text-sm">
      <p className="font-semibold text-kiln-700">Still a draft. Before it goes to the desk:</p>
      <ul className="mt-1 list-disc pl-5 text-ink-800">
        {c.readiness.issues.map((i) => (
          <li key={i.path + i.message}>{i.message}</li>
        ))}
      </ul>
    </div>
  );
}

function CasePhotos({ c, onDelete }: { c: CaseDetail; onDelete?: (p: CaseDetail["photos"][number]) => void }) {
  if (!c.photos.length && !c.abilities?.addPhoto) return null;
  return (
    <Section id="photos" title="Photos">
      {c.abilities?.addPhoto ? (
        <PhotoUploader caseId={c.id} ensureCaseId={() => Promise.resolve(c.id)} photos={c.photos} onDelete={onDelete} />
      ) : (
        <PhotoUploader caseId={c.id} ensureCaseId={() => Promise.resolve(c.id)} photos={c.photos} disabled />
      )}
    </Section>
  );
}

/**
 * /cases/:id — everything on a case: vehicle, complaint, photos, and each trace with its numbers.
 * While an expert works on it live, the live review comes first (on a phone the plot is at the top
 * of the screen, the chat one tap away) and the case's details follow.
 */
export function CasePage() {
  const { id = "" } = useParams();
  const q = useCase(id);
  const qc = useQueryClient();
  const del = useDeleteAttachment();
  const c = q.data;
  const flagged = useMemo(() => (c ? flaggedTraceId(comparisonFor(c.comparison, c.traces), c.traces) : undefined), [c]);

  if (q.isPending) return <CaseLoading />;
  if (q.isError) return <CaseLoadError e={q.error} />;
  if (!c) return null;
  const can = c.abilities ?? {};
  const refresh = () => qc.invalidateQueries({ queryKey: caseKeys.detail(c.id) });
  const liveNow = LIVE_NOW.includes(c.status);
  const live = LIVE_STATES.includes(c.status) ? (
    <LiveReview caseId={c.id} traces={c.traces.map(viewerInfo)} flaggedTraceId={flagged} />
  ) : null;

  return (
    // below a desk's width the live review's dock is fixed at the screen's bottom: room for it
    <div className={`space-y-5 ${live ? "pb-24 lg:pb-0" : ""}`}>
      <CaseHeader c={c} compact={liveNow} />
      {liveNow ? live : null}
      <DraftNotice c={c} />
      <CaseWorkflowPanel caseId={c.id} status={c.status} />
      {["answered", "resolved", "closed"].includes(c.status) ? (
        <Link to={`/cases/${encodeURIComponent(c.id)}/report`} className={`${buttonClass.secondary} no-print`}>
          Printable report for the owner
        </Link>
      ) : null}
      {["draft", "awaiting_payment", "queued", "claimed", "needs_data"].includes(c.status) && c.traces.length ? (
        <SimilarCases caseId={c.id} version={c.traces.length} />
      ) : null}

      <div className="grid gap-5 lg:grid-cols-2">
        <Section id="vehicle" title="Vehicle">
          <VehicleSummary c={c} />
        </Section>
        <Section id="facts" title="Complaint and what was done">
          <CaseFacts c={c} />
        </Section>
      </div>

      <CasePhotos
        c={c}
        onDelete={
          can.deletePhoto
            ? (p) => confirm(`Remove the photo ${p.name}?`) && del.mutate({ kind: "photo", id: p.id, caseId: c.id })
            : undefined
        }
      />

      {liveNow ? null : live}

      <section aria-labelledby="traces-title" className="space-y-4">
        <h2 id="traces-title" className="text-xl font-bold">
          Traces <span className="font-normal text-ink-500">({c.traces.length})</span>
        </h2>
        {del.isError ? (
          <p role="alert" className="text-sm font-semibold text-alarm-600">
            Could not remove it: {del.error.message}
          </p>
        ) : null}
        <CaseTraces
          c={c}
          flaggedTraceId={flagged}
          onDeleteTrace={
            can.deleteTrace
              ? (t) =>
                  confirm(`Remove the trace ${t.name} from this case?`) &&
                  del.mutate({ kind: "trace", id: t.id, caseId: c.id })
              : undefined
          }
        />
        {can.addTrace ? (
          <Section
            id="add-traces"
            title="Add traces"
            description="More captures for this case: each gets a preview and its capture settings."
          >
            <TraceUploader caseId={c.id} onUploaded={() => void refresh()} />
          </Section>
        ) : null}
      </section>
    </div>
  );
}
