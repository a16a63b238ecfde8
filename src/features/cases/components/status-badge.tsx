import type { CaseStatus } from "../../../../shared/domain/case-status";
import { statusLabels, statusTone } from "../lib/labels";

export function StatusBadge({ status }: { status: CaseStatus }) {
  return (
    <span
      className={`inline-flex items-center rounded-full px-2.5 py-0.5 text-xs font-semibold ring-1 ring-inset whitespace-nowrap ${statusTone[status] ?? statusTone.draft}`}
    >
      {statusLabels[status] ?? status}
    </span>
  );
}
