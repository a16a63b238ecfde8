import { useEffect, useRef } from "react";
import { useQueryClient } from "@tanstack/react-query";
import type { CaseStatus } from "../../../../shared/domain/case-status";
import { caseKeys } from "../../../features/cases/api/paths";
import { useWorkflow } from "../../../features/submit/api/get-workflow";
import { submitKeys } from "../../../features/submit/api/paths";
import { useMe } from "../../../features/auth/api/get-me";
import { SubmitCase } from "../../../features/submit/components/submit-case";
import { CaseProgress } from "../../../features/submit/components/case-progress";
import { ExpertCaseActions } from "../../../features/queue/components/expert-case-actions";

/**
 * The paid workflow on the case page, composed from the submit and queue features: the shop's
 * submit step (tier, price, deadline, checkout), the case's progress with answers, confirmation and
 * history, and the expert's controls.
 */
export function CaseWorkflowPanel({ caseId, status }: { caseId: string; status: CaseStatus }) {
  const me = useMe();
  const role = me.data?.role;
  const shop = role === "technician" || role === "owner";
  useStatusInStep(caseId, status, shop && status === "queued" ? 10_000 : undefined);
  return (
    <div className="space-y-5">
      {shop && (status === "draft" || status === "awaiting_payment" || status === "queued") ? <SubmitCase caseId={caseId} status={status} /> : null}
      {role === "expert" || role === "admin" ? <ExpertCaseActions caseId={caseId} /> : null}
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
}
