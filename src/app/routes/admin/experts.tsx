import { useSearchParams } from "react-router-dom";
import { expertStatuses, type ExpertStatus } from "../../../../shared/schemas/auth";
import { ApplicationsList } from "../../../features/experts/components/applications-list";
import { statusLabel } from "../../../features/experts/components/labels";

/** /admin/experts — the desk reviews expert applications, by status (kept in the address). */
export function AdminExpertsPage() {
  const [sp, setSp] = useSearchParams();
  const raw = sp.get("status");
  const status: ExpertStatus = (expertStatuses as readonly string[]).includes(raw ?? "")
    ? (raw as ExpertStatus)
    : "pending";
  return (
    <div className="space-y-4">
      <h1 className="text-2xl font-bold">Expert applications</h1>
      <div role="tablist" aria-label="Status" className="flex flex-wrap gap-2">
        {expertStatuses.map((s) => (
          <button
            key={s}
            type="button"
            role="tab"
            aria-selected={s === status}
            className={`min-h-11 rounded-full border px-4 text-sm font-semibold ${s === status ? "border-kiln-500 bg-kiln-50 text-ink-900" : "border-ink-200 bg-white text-ink-700 hover:border-ink-300"}`}
            onClick={() => setSp(s === "pending" ? {} : { status: s }, { replace: true })}
          >
            {statusLabel[s]}
          </button>
        ))}
      </div>
      <div role="tabpanel">
        <ApplicationsList status={status} />
      </div>
    </div>
  );
}
