import { Link } from "react-router-dom";
import { useLiveCaseList, type CaseListParams } from "../api/list-cases";
import { casePages } from "../api/paths";
import { vehicleTitle } from "../lib/labels";
import { StatusBadge } from "./status-badge";
import { UnreadBadge } from "./case-list";

/**
 * A short list of cases with what each waits on — the tech's home (open and live cases, those
 * waiting on the reader first) and the admin's (deadlines at risk). Refreshes by itself, and at once
 * when a notice is pushed.
 */
export function OpenCases({
  params,
  empty,
  title,
  more,
  showShop = false,
}: {
  showShop?: boolean;
  params: Partial<CaseListParams>;
  empty: string;
  title: string;
  more?: { to: string; label: string };
}) {
  const list = useLiveCaseList({ page: 1, pageSize: 8, ...params });
  const items = list.data?.items ?? [];
  return (
    <section aria-label={title} className="space-y-3">
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <h2 className="text-xl font-bold text-ink-900">
          {title} {list.data ? <span className="font-normal text-ink-500">({list.data.total})</span> : null}
        </h2>
        {more ? (
          <Link
            to={more.to}
            className="inline-flex min-h-11 items-center font-semibold text-ink-700 underline-offset-2 hover:underline"
          >
            {more.label}
          </Link>
        ) : null}
      </div>
      {list.isPending ? (
        <div className="h-24 animate-pulse rounded-xl bg-ink-100" aria-busy="true" aria-label={`Loading: ${title}`} />
      ) : list.isError ? (
        <p role="alert" className="font-semibold text-alarm-600">
          Could not load the cases: {list.error.message}
        </p>
      ) : items.length === 0 ? (
        <p className="rounded-xl border border-dashed border-ink-300 bg-white px-4 py-6 text-ink-600">{empty}</p>
      ) : (
        <ul className="grid gap-3 lg:grid-cols-2">
          {items.map((c) => (
            <li key={c.id}>
              <Link
                to={casePages.one(c.id)}
                className={`block h-full rounded-xl border bg-white p-4 shadow-sm active:bg-kiln-50 ${
                  c.waiting.on === "you" ? "border-kiln-400" : "border-ink-200"
                }`}
              >
                <div className="flex items-start justify-between gap-2">
                  <p className="min-w-0 font-semibold text-ink-900">{vehicleTitle(c.vehicle)}</p>
                  <StatusBadge status={c.status} />
                </div>
                {showShop && c.shopName ? <p className="text-sm text-ink-600">{c.shopName}</p> : null}
                <p
                  className={`mt-1 text-sm ${c.waiting.on === "you" ? "font-semibold text-kiln-700" : "text-ink-700"}`}
                >
                  {c.waiting.on === "you" ? "Waiting on you: " : ""}
                  {c.waiting.text}
                </p>
                {c.unread.messages || c.unread.marks ? (
                  <p className="mt-2">
                    <UnreadBadge unread={c.unread} />
                  </p>
                ) : null}
              </Link>
            </li>
          ))}
        </ul>
      )}
    </section>
  );
}
