import type { CaseStatus } from "../../../../shared/domain/case-status";
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
  return (
    <div className="space-y-5">
      {shop && (status === "draft" || status === "awaiting_payment" || status === "queued") ? <SubmitCase caseId={caseId} status={status} /> : null}
      {role === "expert" || role === "admin" ? <ExpertCaseActions caseId={caseId} /> : null}
      <CaseProgress caseId={caseId} />
    </div>
  );
}
