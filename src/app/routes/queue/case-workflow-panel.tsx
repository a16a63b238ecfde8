import { useEffect, useRef } from "react";
import { useNavigate } from "react-router-dom";
import { useQueryClient } from "@tanstack/react-query";
import type { CaseStatus } from "../../../../shared/domain/case-status";
import { caseKeys, casePages } from "../../../features/cases/api/paths";
import { useCase } from "../../../features/cases/api/get-case";
import { useWorkflow } from "../../../features/submit/api/get-workflow";
import { submitKeys } from "../../../features/submit/api/paths";
import { useMe } from "../../../features/auth/api/get-me";
import { SubmitCase } from "../../../features/submit/components/submit-case";
import { CaseProgress } from "../../../features/submit/components/case-progress";
import { ExpertCaseActions } from "../../../features/queue/components/expert-case-actions";
import { AdminCaseActions } from "../../../features/desk/components/admin-case-actions";
import { useMarkCaseSeen } from "../../../features/notifications/api/notifications";

/**
 * The paid workflow on the case page, composed from the submit, queue and desk features: the
 * shop's submit step (tier, price, deadline, one pay action; deleting a draft), the case's progress
 * with answers, confirmation and history, the expert's controls, and the desk's view of the case
 * for admins (refund, hand to another expert, back to the queue). Opening the page reads the
 * case's messages and marks (their notices and the unread counts follow).
 */
export function CaseWorkflowPanel({ caseId, status }: { caseId: string; status: CaseStatus }) {
  const me = useMe();
  const nav = useNavigate();
  const role = me.data?.role;
  const shop = role === "technician" || role === "owner";
  const wf = useStatusInStep(caseId, status, shop && status === "queued" ? 10_000 : undefined);
  const detail = useCase(caseId);
  // readers only (an approved expert looking at a queued case before claiming it is not one)
  useMarkCaseSeen(caseId, !!detail.data?.abilities.read);
  return (
    <div className="space-y-5">
      {shop && (status === "draft" || status === "awaiting_payment" || status === "queued") ? (
        <SubmitCase
          caseId={caseId}
          status={status}
          ready={status === "draft" ? detail.data?.readiness.complete : undefined}
          onDeleted={() => nav(casePages.list, { replace: true })}
        />
      ) : null}
      {role === "expert" ? <ExpertCaseActions caseId={caseId} /> : null}
      {role === "admin" && wf.data ? <AdminCaseActions w={wf.data} /> : null}
      <CaseProgress caseId={caseId} />
    </div>
  );
}

/**
 * The case page's own query and the workflow each learn of a new status first in their own way
 * (the live room refetches the case; the workflow polls — every 10 s while the shop waits for a
 * claim): whichever sees the change refreshes the other, so the badge, the live review and the
 * workflow's steps move together without a reload.
 */
function useStatusInStep(caseId: string, status: CaseStatus, pollMs?: number) {
  const qc = useQueryClient();
  const wf = useWorkflow(caseId, pollMs);
  const seen = useRef(status);
  useEffect(() => {
    if (seen.current === status) return;
    seen.current = status;
    void qc.invalidateQueries({ queryKey: submitKeys.workflow(caseId) });
  }, [qc, caseId, status]);
  const wfStatus = wf.data?.status;
  useEffect(() => {
    if (wfStatus && wfStatus !== status) void qc.invalidateQueries({ queryKey: caseKeys.detail(caseId) });
  }, [qc, caseId, status, wfStatus]);
  return wf;
}
