import {
  createColumnHelper,
  flexRender,
  getCoreRowModel,
  useReactTable,
  type SortingState,
} from "@tanstack/react-table";
import { useEffect, useId, useState } from "react";
import { Link } from "react-router-dom";
import { caseStatuses, type CaseStatus } from "../../../../shared/domain/case-status";
import type { CaseSortField } from "../../../../shared/schemas/case";
import { useCaseList, type CaseListParams } from "../api/list-cases";
import { casePages } from "../api/paths";
import { codeStrings, type CaseListItem } from "../api/types";
import { formatDate, statusLabels, vehicleTitle } from "../lib/labels";
import { StatusBadge } from "./status-badge";
import { buttonClass, inputBase, inputClass } from "./ui";

const col = createColumnHelper<CaseListItem>();

/** Columns; the id of a sortable column is the server's sort field. */
const columns = [
  col.accessor((r) => vehicleTitle(r.vehicle), {
    id: "vehicle",
    header: "Vehicle",
    cell: (c) => (
      <div>
        <Link to={casePages.one(c.row.original.id)} className="font-semibold text-ink-900 underline-offset-2 hover:underline">
          {c.getValue()}
        </Link>
        {c.row.original.vehicle?.vin ? <div className="font-mono text-xs text-ink-500">{c.row.original.vehicle.vin}</div> : null}
      </div>
    ),
  }),
  col.accessor((r) => r.vehicle?.year ?? null, {
    id: "year",
    header: "Year",
    cell: (c) => c.getValue() ?? "—",
  }),
  col.accessor((r) => codeStrings(r.codes), {
    id: "codes",
    header: "Codes",
    enableSorting: false,
    cell: (c) => <Codes codes={c.getValue()} />,
  }),
  col.accessor("complaint", {
    header: "Complaint",
    enableSorting: false,
    cell: (c) => <p className="line-clamp-2 max-w-md text-ink-700">{c.getValue() || <span className="italic text-ink-400">not written yet</span>}</p>,
  }),
  col.accessor("status", {
    header: "Status",
    cell: (c) => <StatusBadge status={c.getValue()} />,
  }),
  col.accessor("updatedAt", {
    header: "Updated",
    cell: (c) => <span className="whitespace-nowrap text-ink-600">{formatDate(c.getValue())}</span>,
  }),
];

const sortOptions: { value: CaseSortField; label: string }[] = [
  { value: "updatedAt", label: "Last updated" },
  { value: "createdAt", label: "Opened" },
  { value: "vehicle", label: "Vehicle" },
  { value: "year", label: "Model year" },
  { value: "status", label: "Status" },
];

function Codes({ codes }: { codes: string[] }) {
  if (!codes.length) return <span className="text-ink-400">—</span>;
  const shown = codes.slice(0, 3);
  return (
    <span className="flex flex-wrap gap-1">
      {shown.map((c) => (
        <span key={c} className="rounded bg-ink-100 px-1.5 py-0.5 font-mono text-xs font-semibold text-ink-800">
          {c}
        </span>
      ))}
      {codes.length > 3 ? <span className="text-xs text-ink-500">+{codes.length - 3}</span> : null}
    </span>
  );
}

/** A text box that reports its value a moment after typing stops. */
function useDebounced<T>(value: T, ms = 300): T {
  const [v, setV] = useState(value);
  useEffect(() => {
    const t = setTimeout(() => setV(value), ms);
    return () => clearTimeout(t);
  }, [value, ms]);
  return v;
}

/**
 * The shop's cases: filters, sortable columns and pages, all worked out by the server. On a
 * phone the rows become cards; the table itself scrolls sideways inside its box if it must.
 */
export function CaseList({ params, onChange, canOpen = true }: { params: CaseListParams; onChange: (p: CaseListParams) => void; /** false for experts and admins, who do not open cases */ canOpen?: boolean }) {
  const list = useCaseList(params);
  const [q, setQ] = useState(params.q ?? "");
  const [vehicle, setVehicle] = useState(params.vehicle ?? "");
  const dq = useDebounced(q);
  const dv = useDebounced(vehicle);
  const ids = { q: useId(), v: useId(), s: useId(), sort: useId(), size: useId() };

  useEffect(() => {
    if ((params.q ?? "") !== dq || (params.vehicle ?? "") !== dv) onChange({ ...params, q: dq || undefined, vehicle: dv || undefined, page: 1 });
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [dq, dv]);

  const sorting: SortingState = params.sort ? [{ id: params.sort, desc: params.dir !== "asc" }] : [{ id: "updatedAt", desc: true }];
  const total = list.data?.total ?? 0;
  const pageCount = Math.max(1, Math.ceil(total / params.pageSize));

  const table = useReactTable({
    data: list.data?.items ?? [],
    columns,
    getCoreRowModel: getCoreRowModel(),
    manualSorting: true,
    manualPagination: true,
    pageCount,
    state: { sorting, pagination: { pageIndex: params.page - 1, pageSize: params.pageSize } },
    onSortingChange: (updater) => {
      const next = typeof updater === "function" ? updater(sorting) : updater;
      const s = next[0];
      onChange({ ...params, sort: s ? (s.id as CaseSortField) : undefined, dir: s ? (s.desc ? "desc" : "asc") : undefined, page: 1 });
    },
    enableSortingRemoval: false,
  });

  const filtered = !!(params.q || params.vehicle || params.status);
  const rows = table.getRowModel().rows;

  return (
    <div className="space-y-4">
      <div className="grid gap-3 rounded-xl border border-ink-200 bg-white p-4 shadow-sm sm:grid-cols-2 lg:grid-cols-4">
        <div>
          <label htmlFor={ids.q} className="mb-1 block text-sm font-semibold text-ink-800">
            Search
          </label>
          <input id={ids.q} type="search" value={q} onChange={(e) => setQ(e.target.value)} placeholder="Complaint, code, notes…" className={inputClass} />
        </div>
        <div>
          <label htmlFor={ids.v} className="mb-1 block text-sm font-semibold text-ink-800">
            Vehicle
          </label>
          <input id={ids.v} type="search" value={vehicle} onChange={(e) => setVehicle(e.target.value)} placeholder="Make, model, VIN…" className={inputClass} />
        </div>
        <div>
          <label htmlFor={ids.s} className="mb-1 block text-sm font-semibold text-ink-800">
            Status
          </label>
          <select
            id={ids.s}
            value={params.status ?? ""}
            onChange={(e) => onChange({ ...params, status: (e.target.value || undefined) as CaseStatus | undefined, page: 1 })}
            className={inputClass}
          >
            <option value="">All statuses</option>
            {caseStatuses.map((s) => (
              <option key={s} value={s}>
                {statusLabels[s]}
              </option>
            ))}
          </select>
        </div>
        <div className="lg:hidden">
          <label htmlFor={ids.sort} className="mb-1 block text-sm font-semibold text-ink-800">
            Sort by
          </label>
          <div className="flex gap-2">
            <select
              id={ids.sort}
              value={params.sort ?? "updatedAt"}
              onChange={(e) => onChange({ ...params, sort: e.target.value as CaseSortField, page: 1 })}
              className={inputClass}
            >
              {sortOptions.map((o) => (
                <option key={o.value} value={o.value}>
                  {o.label}
                </option>
              ))}
            </select>
            <button
              type="button"
              className={`${buttonClass.secondary} flex-none`}
              onClick={() => onChange({ ...params, dir: params.dir === "asc" ? "desc" : "asc", page: 1 })}
              aria-label={params.dir === "asc" ? "Sorted ascending; sort descending" : "Sorted descending; sort ascending"}
            >
              {params.dir === "asc" ? "↑" : "↓"}
            </button>
          </div>
        </div>
      </div>

      {list.isError ? (
        <p role="alert" className="rounded-lg border border-alarm-500 bg-white px-4 py-3 font-semibold text-alarm-600">
          Could not load the cases: {list.error.message}{" "}
          <button type="button" className="underline" onClick={() => void list.refetch()}>
            Try again
          </button>
        </p>
      ) : list.isPending ? (
        <div className="space-y-2" aria-busy="true" aria-label="Loading cases">
          {[0, 1, 2].map((i) => (
            <div key={i} className="h-16 animate-pulse rounded-xl bg-ink-100" />
          ))}
        </div>
      ) : total === 0 ? (
        <div className="rounded-xl border border-dashed border-ink-300 bg-white px-6 py-10 text-center">
          {filtered ? (
            <>
              <p className="text-lg font-semibold">No cases match these filters.</p>
              <button
                type="button"
                className={`${buttonClass.secondary} mt-4`}
                onClick={() => {
                  setQ("");
                  setVehicle("");
                  onChange({ page: 1, pageSize: params.pageSize, sort: params.sort, dir: params.dir });
                }}
              >
                Clear the filters
              </button>
            </>
          ) : (
            <>
              <p className="text-lg font-semibold">No cases yet.</p>
              {canOpen ? (
                <>
                  <p className="mt-1 text-ink-600">Open a case with the vehicle, the complaint and your scope captures; an expert answers it.</p>
                  <Link to={casePages.new} className={`${buttonClass.primary} mt-4`}>
                    Open your first case
                  </Link>
                </>
              ) : (
                <p className="mt-1 text-ink-600">The cases you claim from the queue are listed here.</p>
              )}
            </>
          )}
        </div>
      ) : (
        <div aria-busy={list.isFetching || undefined}>
          {/* tablets and desktops: the table */}
          <div className="hidden overflow-x-auto rounded-xl border border-ink-200 bg-white shadow-sm md:block">
            <table className="w-full text-left text-sm">
              <caption className="sr-only">Cases of your shop, {total} in all</caption>
              <thead className="bg-ink-50 text-ink-600">
                {table.getHeaderGroups().map((hg) => (
                  <tr key={hg.id}>
                    {hg.headers.map((h) => {
                      const sorted = h.column.getIsSorted();
                      return (
                        <th
                          key={h.id}
                          scope="col"
                          className="px-3 py-2 font-semibold"
                          aria-sort={sorted === "asc" ? "ascending" : sorted === "desc" ? "descending" : undefined}
                        >
                          {h.column.getCanSort() ? (
                            <button type="button" className="inline-flex min-h-11 items-center gap-1 hover:text-ink-900" onClick={h.column.getToggleSortingHandler()}>
                              {flexRender(h.column.columnDef.header, h.getContext())}
                              <span aria-hidden="true" className={sorted ? "text-kiln-600" : "text-ink-300"}>
                                {sorted === "asc" ? "▲" : sorted === "desc" ? "▼" : "↕"}
                              </span>
                            </button>
                          ) : (
                            flexRender(h.column.columnDef.header, h.getContext())
                          )}
                        </th>
                      );
                    })}
                  </tr>
                ))}
              </thead>
              <tbody className="divide-y divide-ink-100">
                {rows.map((r) => (
                  <tr key={r.id} className="hover:bg-kiln-50/50">
                    {r.getVisibleCells().map((c) => (
                      <td key={c.id} className="px-3 py-3 align-top">
                        {flexRender(c.column.columnDef.cell, c.getContext())}
                      </td>
                    ))}
                  </tr>
                ))}
              </tbody>
            </table>
          </div>

          {/* phones: cards */}
          <ul className="space-y-3 md:hidden" aria-label={`Cases of your shop, ${total} in all`}>
            {rows.map((r) => {
              const c = r.original;
              return (
                <li key={r.id}>
                  <Link to={casePages.one(c.id)} className="block rounded-xl border border-ink-200 bg-white p-4 shadow-sm active:bg-kiln-50">
                    <div className="flex items-start justify-between gap-2">
                      <p className="font-semibold text-ink-900">{vehicleTitle(c.vehicle)}</p>
                      <StatusBadge status={c.status} />
                    </div>
                    {c.vehicle?.vin ? <p className="break-all font-mono text-xs text-ink-500">{c.vehicle.vin}</p> : null}
                    <p className="mt-1 line-clamp-2 text-sm text-ink-700">{c.complaint || "Complaint not written yet"}</p>
                    <div className="mt-2 flex items-center justify-between gap-2">
                      <Codes codes={codeStrings(c.codes)} />
                      <span className="text-xs text-ink-500">{formatDate(c.updatedAt)}</span>
                    </div>
                  </Link>
                </li>
              );
            })}
          </ul>

          <nav aria-label="Pages" className="mt-4 flex flex-wrap items-center gap-3">
            <button
              type="button"
              className={buttonClass.secondary}
              disabled={params.page <= 1}
              onClick={() => onChange({ ...params, page: params.page - 1 })}
            >
              ← Previous
            </button>
            <span className="text-sm text-ink-600" aria-live="polite">
              Page {params.page} of {pageCount} · {total} case{total === 1 ? "" : "s"}
            </span>
            <button
              type="button"
              className={buttonClass.secondary}
              disabled={params.page >= pageCount}
              onClick={() => onChange({ ...params, page: params.page + 1 })}
            >
              Next →
            </button>
            <label htmlFor={ids.size} className="ml-auto text-sm text-ink-600">
              Per page
            </label>
            <select
              id={ids.size}
              value={params.pageSize}
              onChange={(e) => onChange({ ...params, pageSize: Number(e.target.value), page: 1 })}
              className={`${inputBase} w-24`}
            >
              {[10, 20, 50, 100].map((n) => (
                <option key={n} value={n}>
                  {n}
                </option>
              ))}
            </select>
          </nav>
        </div>
      )}
    </div>
  );
}
