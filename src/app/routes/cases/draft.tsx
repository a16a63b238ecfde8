import { useQueryClient } from "@tanstack/react-query";
import { useRef, useState } from "react";
import { Link, useMatch, useNavigate } from "react-router-dom";
import { useDeleteAttachment } from "../../../features/cases/api/delete-attachment";
import { caseQuery, useCase } from "../../../features/cases/api/get-case";
import type { CaseDetail } from "../../../features/cases/api/types";
import { casePages } from "../../../features/cases/api/paths";
import { CaseForm } from "../../../features/cases/components/case-form";
import { StatusBadge } from "../../../features/cases/components/status-badge";
import { TraceList } from "../../../features/cases/components/trace-list";
import { buttonClass, Section } from "../../../features/cases/components/ui";
import { vehicleTitle } from "../../../features/cases/lib/labels";
import { TraceUploader } from "../../../features/uploads/components/trace-uploader";
import { ApiError } from "../../../lib/api-client";
import { SubmitCase } from "../../../features/submit/components/submit-case";

/**
 * /cases/new and /cases/:id/edit — one page for both (a layout route), so that the first save
 * of a new case moves to its edit address without losing what is on screen (files being read or
 * uploaded included).
 */
export function CaseDraftPage() {
  const match = useMatch("/cases/:id/edit");
  const urlId = match?.params.id ?? null;
  const navigate = useNavigate();
  const qc = useQueryClient();
  const [createdHere, setCreatedHere] = useState<string | null>(null);
  const saveRef = useRef<(() => Promise<string>) | null>(null);
  const id = urlId ?? createdHere;
  const loadForForm = urlId !== null && urlId !== createdHere;
  const detail = useCase(id ?? undefined);
  const del = useDeleteAttachment();

  if (loadForForm && detail.isPending) return <p className="text-ink-500">Loading the case…</p>;
  if (loadForForm && detail.isError) {
    const e = detail.error;
    return (
      <div role="alert" className="rounded-xl border border-alarm-500 bg-white p-5">
        <p className="font-semibold text-alarm-600">
          {e instanceof ApiError && e.status === 404
            ? "This case does not exist or is not yours."
            : `Could not load the case: ${e.message}`}
        </p>
        <Link to={casePages.list} className="mt-3 inline-block underline">
          Back to the cases
        </Link>
      </div>
    );
  }
  const c = detail.data;
  if (c && c.status !== "draft") {
    return (
      <div className="rounded-xl border border-ink-200 bg-white p-5">
        <p className="font-semibold">This case has left the draft stage and can no longer be edited.</p>
        <Link to={casePages.one(c.id)} className={`${buttonClass.primary} mt-3`}>
          Open the case
        </Link>
      </div>
    );
  }

  const ensureCaseId = () =>
    saveRef.current ? saveRef.current() : Promise.reject(new Error("The form is not ready."));
  const abilities: Partial<CaseDetail["abilities"]> = c?.abilities ?? {};
  const refresh = () => id && qc.invalidateQueries({ queryKey: caseQuery(id).queryKey });

  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-center gap-3">
        <Link
          to={id ? casePages.one(id) : casePages.list}
          className="min-h-11 content-center text-sm font-semibold text-ink-600 hover:text-ink-900"
        >
          ← {id ? "Case page" : "Cases"}
        </Link>
      </div>
      <div className="flex flex-wrap items-center gap-3">
        <h1 className="text-2xl font-bold">
          {id ? (c ? `Draft: ${vehicleTitle(c.vehicle)}` : "Draft") : "Open a case"}
        </h1>
        <StatusBadge status="draft" />
      </div>
      <p className="text-ink-600">
        Fill in what you know now; save the draft at any point and come back to it. Once everything the desk needs is
        in, choose how fast you need the answer and pay at the end of the form.
      </p>

      <CaseForm
        key={loadForForm ? urlId! : "this-session"}
        caseId={id}
        initial={loadForForm ? c : null}
        photos={c?.photos ?? []}
        onDeletePhoto={
          abilities.deletePhoto && id
            ? (p) => confirm(`Remove the photo ${p.name}?`) && del.mutate({ kind: "photo", id: p.id, caseId: id })
            : undefined
        }
        saveRef={saveRef}
        onCreated={(newId) => {
          setCreatedHere(newId);
          navigate(casePages.edit(newId), { replace: true });
        }}
        submitStep={({ ready }) => (
          <div id="submit-step" className="scroll-mt-4 pt-2">
            {id ? (
              <SubmitCase
                caseId={id}
                status="draft"
                ready={ready}
                beforePay={ensureCaseId}
                onDeleted={() => navigate(casePages.list, { replace: true })}
              />
            ) : ready ? (
              <p className="text-sm text-ink-700">Save the draft to go on to the payment step.</p>
            ) : null}
          </div>
        )}
      >
        <Section
          id="traces"
          title="Traces"
          description="Scope exports as CSV or TSV, one per cylinder or coil when you compare. Each gets a preview and its capture settings before it goes up."
        >
          {c?.traces.length ? (
            <TraceList
              traces={c.traces}
              onDelete={
                abilities.deleteTrace && id
                  ? (t) =>
                      confirm(`Remove the trace ${t.name} from this case?`) &&
                      del.mutate({ kind: "trace", id: t.id, caseId: id })
                  : undefined
              }
            />
          ) : null}
          {del.isError ? (
            <p role="alert" className="text-sm font-semibold text-alarm-600">
              Could not remove it: {del.error.message}
            </p>
          ) : null}
          <TraceUploader caseId={id} ensureCaseId={ensureCaseId} onUploaded={() => void refresh()} />
        </Section>
      </CaseForm>
    </div>
  );
}
