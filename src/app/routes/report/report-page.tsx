import { Link, useParams } from "react-router-dom";
import { useReport } from "../../../features/report/api/get-report";
import { CaseReport } from "../../../features/report/components/case-report";
import { ApiError } from "../../../lib/api-client";

/** Print styles for the report: A4/Letter margins, no app chrome, figures kept whole. */
const PRINT_CSS = `
@page { margin: 14mm; }
@media print {
  header.no-print, nav, .no-print { display: none !important; }
  main { padding: 0 !important; max-width: none !important; }
  .report { font-size: 11pt; }
  .report figure, .break-inside-avoid { break-inside: avoid; page-break-inside: avoid; }
  .report svg { max-height: 80mm; }
  a { color: inherit; text-decoration: none; }
}`;

/** /cases/:id/report — the printable report for the vehicle's owner. */
export function CaseReportPage() {
  const { id = "" } = useParams();
  const { c, a, n } = useReport(id);
  if (c.isPending || a.isPending || n.isPending) {
    return (
      <div
        className="mx-auto h-96 max-w-3xl animate-pulse rounded-xl bg-ink-100"
        aria-busy="true"
        aria-label="Preparing the report"
      />
    );
  }
  if (c.isError || a.isError) {
    const e = (c.error ?? a.error)!;
    return (
      <div role="alert" className="rounded-xl border border-alarm-500 bg-white p-5">
        <p className="font-semibold text-alarm-600">
          {e instanceof ApiError && e.status === 404
            ? "This case does not exist, or it belongs to another shop."
            : `Could not prepare the report: ${e.message}`}
        </p>
      </div>
    );
  }
  const answers = a.data?.answers ?? [];
  const answer = answers.length ? answers[answers.length - 1] : null;
  return (
    <div className="space-y-4">
      <style>{PRINT_CSS}</style>
      <div className="no-print flex flex-wrap items-center gap-3">
        <Link
          to={`/cases/${encodeURIComponent(id)}`}
          className="inline-flex min-h-11 items-center text-sm font-semibold text-ink-600 hover:text-ink-900"
        >
          ← Back to the case
        </Link>
        <button
          type="button"
          onClick={() => window.print()}
          className="ml-auto inline-flex min-h-11 items-center rounded-lg bg-kiln-500 px-4 font-semibold text-ink-950 hover:bg-kiln-400"
        >
          Print the report
        </button>
      </div>
      <CaseReport c={c.data!} answer={answer} annotations={n.data?.annotations ?? []} />
    </div>
  );
}
