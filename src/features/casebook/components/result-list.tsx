import { Link } from "react-router-dom";
import type { CasebookSearchHit } from "../../../../shared/schemas/casebook";
import { casebookPages } from "../api/paths";
import { formatDay } from "../lib/labels";
import { Snippet } from "./snippet";
import { CodeChip } from "./ui";
import { WaveformThumbnail } from "./waveform-thumbnail";

/** The results of a search: title, vehicle, a thumbnail of the waveform, codes, root cause and the matching passage. */
export function ResultList({ results }: { results: CasebookSearchHit[] }) {
  return (
    <ol className="space-y-3">
      {results.map((r) => (
        <li key={r.id} className="rounded-xl border border-ink-200 bg-white p-4 shadow-sm">
          <article aria-labelledby={`hit-${r.id}`}>
            <div className="flex flex-wrap items-start justify-between gap-x-4 gap-y-2">
              <div className="min-w-0 flex-1">
                <h3 id={`hit-${r.id}`} className="text-base font-bold text-ink-900">
                  <Link
                    to={casebookPages.entry(r.id)}
                    className="underline decoration-ink-300 underline-offset-4 hover:decoration-kiln-500"
                  >
                    {r.title}
                  </Link>
                </h3>
                <p className="mt-1 text-sm text-ink-600">{r.vehicle}</p>
              </div>
              <WaveformThumbnail entryId={r.id} />
            </div>
            {r.codes.length ? (
              <div className="mt-2 flex flex-wrap gap-1.5">
                {r.codes.map((c) => (
                  <CodeChip key={c} code={c} />
                ))}
              </div>
            ) : null}
            <p className="mt-2 text-sm">
              <span className="font-semibold text-ink-800">Root cause: </span>
              {r.rootCause}
            </p>
            <Snippet text={r.snippet} className="mt-2 text-sm text-ink-700" />
            <p className="mt-2 flex flex-wrap gap-x-4 text-xs text-ink-500">
              <span>{r.confirmed ? "Fix confirmed by the shop" : "Fix not confirmed"}</span>
              <span>Published {formatDay(r.publishedAt)}</span>
              {r.helpfulCount ? <span>{r.helpfulCount} found it helpful</span> : null}
            </p>
          </article>
        </li>
      ))}
    </ol>
  );
}

/** Previous / next and the page number. */
export function Pagination({ page, pages, onPage }: { page: number; pages: number; onPage: (p: number) => void }) {
  if (pages <= 1) return null;
  const last = Math.min(pages, 500);
  return (
    <nav aria-label="Result pages" className="flex flex-wrap items-center justify-center gap-2">
      <button
        type="button"
        className="min-h-11 rounded-lg border border-ink-300 bg-white px-4 font-semibold disabled:opacity-40"
        disabled={page <= 1}
        onClick={() => onPage(page - 1)}
      >
        ← Previous
      </button>
      <span className="px-2 text-sm text-ink-600" aria-current="page">
        Page {page} of {last.toLocaleString("en-US")}
      </span>
      <button
        type="button"
        className="min-h-11 rounded-lg border border-ink-300 bg-white px-4 font-semibold disabled:opacity-40"
        disabled={page >= last}
        onClick={() => onPage(page + 1)}
      >
        Next →
      </button>
    </nav>
  );
}
