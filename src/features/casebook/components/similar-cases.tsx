import { Link } from "react-router-dom";
import { useSimilar } from "../api/get-similar";
import { casebookPages } from "../api/paths";
import { CodeChip } from "./ui";
import { WaveformThumbnail } from "./waveform-thumbnail";

/**
 * "These may already answer your case": casebook entries whose measured waveform pattern is
 * nearest to this case's traces, each with a thumbnail of its waveform and the reason in words. Offered to the technician before
 * paying and to the expert while working.
 */
export function SimilarCases({
  caseId,
  limit = 5,
  title = "These may already answer your case",
  version = 0,
}: {
  caseId: string;
  limit?: number;
  title?: string;
  version?: string | number;
}) {
  const q = useSimilar(caseId, limit, version);
  return (
    <section
      aria-labelledby={`similar-${caseId}`}
      className="no-print min-w-0 rounded-xl border border-ink-200 bg-white p-4 shadow-sm sm:p-5"
    >
      <h2 id={`similar-${caseId}`} className="text-lg font-bold text-ink-900">
        {title}
      </h2>
      <p className="mt-1 text-sm text-ink-600">
        Resolved cases from the casebook with the nearest measured waveform pattern.
      </p>
      <div className="mt-3">
        {q.isPending ? (
          <div className="space-y-2" aria-busy="true" aria-label="Looking for similar cases">
            <div className="h-14 animate-pulse rounded-lg bg-ink-100" />
            <div className="h-14 animate-pulse rounded-lg bg-ink-100" />
          </div>
        ) : q.isError ? (
          <p role="alert" className="text-sm font-semibold text-alarm-600">
            Could not look for similar cases: {q.error.message}
          </p>
        ) : q.data.results.length === 0 ? (
          <p className="text-sm text-ink-600">{q.data.note ?? "Nothing similar in the casebook yet."}</p>
        ) : (
          <ol className="space-y-3">
            {q.data.results.map((r) => (
              <li key={r.id} className="flow-root rounded-lg border border-ink-200 p-3">
                <WaveformThumbnail
                  entryId={r.id}
                  className="float-right mb-1 ml-3 max-[380px]:float-none max-[380px]:ml-0"
                />
                <Link
                  to={casebookPages.entry(r.id)}
                  className="font-semibold text-ink-900 underline decoration-ink-300 underline-offset-4 hover:decoration-kiln-500"
                >
                  {r.title}
                </Link>
                <div className="mt-1 flex flex-wrap items-center gap-1.5 text-sm text-ink-600">
                  <span>{r.vehicle}</span>
                  {r.codes.map((c) => (
                    <CodeChip key={c} code={c} />
                  ))}
                </div>
                <ul className="mt-2 list-disc space-y-0.5 pl-5 text-sm text-ink-800">
                  {r.reasons.map((why) => (
                    <li key={why}>{why.charAt(0).toUpperCase() + why.slice(1)}</li>
                  ))}
                </ul>
                <p className="mt-1 text-xs text-ink-500">
                  Match {Math.round(r.similarity * 100)} %
                  {r.helpfulCount ? ` · ${r.helpfulCount} found it helpful` : ""}
                </p>
              </li>
            ))}
          </ol>
        )}
      </div>
    </section>
  );
}
