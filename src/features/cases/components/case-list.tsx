import { useEffect, useId, useState, type ReactNode } from "react";
import { Link } from "react-router-dom";
import { caseStatuses } from "../../../../shared/domain/case-status";
import type { CaseDeadlineFilter, CaseSortField, CaseState } from "../../../../shared/schemas/case";
import type { CaseFiltersView } from "../../../../shared/views/desk";
import { formatDateTime, formatTimeLeft } from "../../../../shared/format";
import { useCaseList, type CaseListParams } from "../api/list-cases";
import { casePages } from "../api/paths";
import { codeStrings, type CaseListItem } from "../api/types";
import { formatDate, statusLabels, vehicleTitle } from "../lib/labels";
import { StatusBadge } from "./status-badge";
import { buttonClass, inputBase, inputClass } from "./ui";

/** Who reads the list: a shop's people see their shop's cases; the desk's admins see every shop's. */
export type ListReader = "shop" | "expert" | "admin";

const sortOptions: { value: CaseSortField; label: string }[] = [
  { value: "updatedAt", label: "Last updated" },
  { value: "attention", label: "Needs attention first" },
  { value: "deadline", label: "Answer deadline" },
  { value: "createdAt", label: "Opened" },
  { value: "vehicle", label: "Vehicle" },
  { value: "year", label: "Model year" },
  { value: "status", label: "Status" },
];

const deadlineOptions: { value: CaseDeadlineFilter; label: string }[] = [
  { value: "at_risk", label: "At risk or overdue" },
  { value: "overdue", label: "Overdue" },
  { value: "next_24h", label: "Due within a day" },
];

function Codes({ codes }: { codes: string[] }) {
  if (!codes.length) return null;
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

/** The answer deadline: when, how long is left, and a warning when it is at risk. */
function Deadline({ c }: { c: CaseListItem }) {
  if (!c.deadlineAt || !c.deadlineRisk) return <span className="text-ink-400">—</span>;
  const left = formatTimeLeft(c.deadlineAt);
  const warn = c.deadlineRisk === "overdue" || c.deadlineRisk === "at_risk";
  return (
    <span className="inline-flex flex-wrap items-center gap-1">
      <span className="whitespace-nowrap">{formatDateTime(c.deadlineAt)}</span>
      <span className={`whitespace-nowrap text-xs ${warn ? "font-bold text-alarm-600" : "text-ink-500"}`}>
        {left.text}
        {c.deadlineRisk === "at_risk" ? " · at risk" : ""}
      </span>
    </span>
  );
}

const badge = "inline-flex items-center gap-1 rounded-full bg-kiln-500 px-2 py-0.5 text-xs font-bold text-ink-950";
const waitingTone = (c: CaseListItem) => (c.waiting.on === "you" ? "font-semibold text-kiln-700" : "text-ink-600");

/** New messages and marks by others since the reader last had the case open. */
export function UnreadBadge({ unread }: { unread: CaseListItem["unread"] }) {
  const parts = [
    unread.messages ? `${unread.messages} message${unread.messages === 1 ? "" : "s"}` : "",
    unread.marks ? `${unread.marks} mark${unread.marks === 1 ? "" : "s"}` : "",
  ].filter(Boolean);
  if (!parts.length) return <span className="text-ink-400">—</span>;
  return <span className={badge}>{parts.join(", ")} new</span>;
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

function Select<T extends string>(props: {
  label: string;
  value: T | undefined;
  options: { value: T; label: string }[];
  all: string;
  onChange: (v: T | undefined) => void;
  className?: string;
}) {
  const id = useId();
  return (
    <div className={props.className}>
      <label htmlFor={id} className="mb-1 block text-sm font-semibold text-ink-800">
        {props.label}
      </label>
      <select
        id={id}
        value={props.value ?? ""}
        onChange={(e) => props.onChange((e.target.value || undefined) as T | undefined)}
        className={inputClass}
      >
        <option value="">{props.all}</option>
        {props.options.map((o) => (
          <option key={o.value} value={o.value}>
            {o.label}
          </option>
        ))}
      </select>
    </div>
  );
}

/** Search, vehicle, status; the admin's state, deadline, expert and shop; the sort on small screens. */
function Filters(props: {
  params: CaseListParams;
  onChange: (p: CaseListParams) => void;
  reader: ListReader;
  options?: CaseFiltersView;
  q: string;
  setQ: (v: string) => void;
  vehicle: string;
  setVehicle: (v: string) => void;
}) {
  const { params, onChange, reader, options } = props;
  const ids = { q: useId(), v: useId() };
  const set = (patch: Partial<CaseListParams>) => onChange({ ...params, ...patch, page: 1 });
  return (
    <div className="grid gap-3 rounded-xl border border-ink-200 bg-white p-4 shadow-sm sm:grid-cols-2 lg:grid-cols-4">
      <div>
        <label htmlFor={ids.q} className="mb-1 block text-sm font-semibold text-ink-800">
          Search
        </label>
        <input
          id={ids.q}
          type="search"
          value={props.q}
          onChange={(e) => props.setQ(e.target.value)}
          placeholder="Complaint, code, notes…"
          className={inputClass}
        />
      </div>
      <div>
        <label htmlFor={ids.v} className="mb-1 block text-sm font-semibold text-ink-800">
          Vehicle
        </label>
        <input
          id={ids.v}
          type="search"
          value={props.vehicle}
          onChange={(e) => props.setVehicle(e.target.value)}
          placeholder="Make, model, VIN…"
          className={inputClass}
        />
      </div>
      <Select
        label="Status"
        value={params.status}
        all="All statuses"
        options={caseStatuses.map((s) => ({ value: s, label: statusLabels[s] }))}
        onChange={(status) => set({ status })}
      />
      <Select<CaseState>
        label="Stage"
        value={params.state}
        all="Open and finished"
        options={[
          { value: "open", label: "Open" },
          { value: "finished", label: "Finished" },
        ]}
        onChange={(state) => set({ state })}
      />
      {reader === "admin" ? (
        <>
          <Select
            label="Answer deadline"
            value={params.deadline}
            all="Any deadline"
            options={deadlineOptions}
            onChange={(deadline) => set({ deadline })}
          />
          <Select
            label="Expert"
            value={params.expertId}
            all="Any expert"
            options={(options?.experts ?? []).map((e) => ({ value: e.id, label: e.name }))}
            onChange={(expertId) => set({ expertId })}
          />
          <Select
            label="Shop"
            value={params.shopId}
            all="Every shop"
            options={(options?.shops ?? []).map((s) => ({ value: s.id, label: s.name }))}
            onChange={(shopId) => set({ shopId })}
          />
        </>
      ) : null}
      <SortControl params={params} onChange={onChange} />
    </div>
  );
}

function SortControl({ params, onChange }: { params: CaseListParams; onChange: (p: CaseListParams) => void }) {
  const id = useId();
  return (
    <div className="lg:hidden">
      <label htmlFor={id} className="mb-1 block text-sm font-semibold text-ink-800">
        Sort by
      </label>
      <div className="flex gap-2">
        <select
          id={id}
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
  );
}

/** A column header that sorts the list on the server (its id is the server's sort field). */
function SortHeader({
  field,
  params,
  onChange,
  children,
}: {
  field: CaseSortField;
  params: CaseListParams;
  onChange: (p: CaseListParams) => void;
  children: ReactNode;
}) {
  const active = (params.sort ?? "updatedAt") === field;
  const dir = active
    ? (params.dir ?? (field === "vehicle" || field === "status" || field === "deadline" ? "asc" : "desc"))
    : null;
  return (
    <th
      scope="col"
      className="px-3 py-2 font-semibold"
      aria-sort={dir === "asc" ? "ascending" : dir === "desc" ? "descending" : undefined}
    >
      <button
        type="button"
        className="inline-flex min-h-11 items-center gap-1 hover:text-ink-900"
        onClick={() =>
          onChange({
            ...params,
            sort: field,
            dir: active && dir === "desc" ? "asc" : active ? "desc" : undefined,
            page: 1,
          })
        }
      >
        {children}
        <span aria-hidden="true" className={active ? "text-kiln-600" : "text-ink-300"}>
          {dir === "asc" ? "▲" : dir === "desc" ? "▼" : "↕"}
        </span>
      </button>
    </th>
  );
}

function CaseTable({
  items,
  params,
  onChange,
  reader,
  caption,
}: {
  items: CaseListItem[];
  params: CaseListParams;
  onChange: (p: CaseListParams) => void;
  reader: ListReader;
  caption: string;
}) {
  const admin = reader === "admin";
  return (
    <div className="hidden overflow-x-auto rounded-xl border border-ink-200 bg-white shadow-sm md:block">
      <table className="w-full text-left text-sm">
        <caption className="sr-only">{caption}</caption>
        <thead className="bg-ink-50 text-ink-600">
          <tr>
            <SortHeader field="vehicle" params={params} onChange={onChange}>
              Case
            </SortHeader>
            {admin ? (
              <th scope="col" className="px-3 py-2 font-semibold">
                Shop
              </th>
            ) : null}
            <SortHeader field="status" params={params} onChange={onChange}>
              Status
            </SortHeader>
            <th scope="col" className="px-3 py-2 font-semibold">
              Expert
            </th>
            <SortHeader field="deadline" params={params} onChange={onChange}>
              Answer due
            </SortHeader>
            {admin ? null : (
              <th scope="col" className="px-3 py-2 font-semibold">
                Unread
              </th>
            )}
            <SortHeader field="updatedAt" params={params} onChange={onChange}>
              Updated
            </SortHeader>
          </tr>
        </thead>
        <tbody className="divide-y divide-ink-100">
          {items.map((c) => (
            <tr key={c.id} className="hover:bg-kiln-50/50">
              <td className="px-3 py-3 align-top">
                <Link
                  to={casePages.one(c.id)}
                  className="font-semibold text-ink-900 underline-offset-2 hover:underline"
                >
                  {vehicleTitle(c.vehicle)}
                </Link>
                {c.vehicle?.vin ? <div className="font-mono text-xs text-ink-500">{c.vehicle.vin}</div> : null}
                <p className="line-clamp-1 max-w-xs text-ink-700">
                  {c.complaint || <span className="italic text-ink-400">not written yet</span>}
                </p>
                <Codes codes={codeStrings(c.codes)} />
              </td>
              {admin ? <td className="px-3 py-3 align-top">{c.shopName ?? "—"}</td> : null}
              <td className="px-3 py-3 align-top">
                <StatusBadge status={c.status} />
                {c.waiting.on === "nobody" ? null : (
                  <p className={`mt-1 max-w-56 text-xs ${waitingTone(c)}`}>{c.waiting.text}</p>
                )}
              </td>
              <td className="px-3 py-3 align-top">{c.expert?.name ?? <span className="text-ink-400">—</span>}</td>
              <td className="px-3 py-3 align-top">
                <Deadline c={c} />
              </td>
              {admin ? null : (
                <td className="px-3 py-3 align-top">
                  <UnreadBadge unread={c.unread} />
                </td>
              )}
              <td className="whitespace-nowrap px-3 py-3 align-top text-ink-600">{formatDate(c.updatedAt)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

function CaseCards({ items, reader, caption }: { items: CaseListItem[]; reader: ListReader; caption: string }) {
  return (
    <ul className="space-y-3 md:hidden" aria-label={caption}>
      {items.map((c) => (
        <li key={c.id}>
          <Link
            to={casePages.one(c.id)}
            className="block rounded-xl border border-ink-200 bg-white p-4 shadow-sm active:bg-kiln-50"
          >
            <div className="flex items-start justify-between gap-2">
              <p className="min-w-0 font-semibold text-ink-900">{vehicleTitle(c.vehicle)}</p>
              <StatusBadge status={c.status} />
            </div>
            {reader === "admin" && c.shopName ? <p className="text-sm text-ink-600">{c.shopName}</p> : null}
            <p className={`mt-1 text-sm ${c.waiting.on === "you" ? "font-semibold text-kiln-700" : "text-ink-700"}`}>
              {c.waiting.text}
            </p>
            <p className="mt-1 line-clamp-2 text-sm text-ink-700">{c.complaint || "Complaint not written yet"}</p>
            <div className="mt-2 flex flex-wrap items-center gap-2 text-xs text-ink-600">
              {reader !== "admin" && (c.unread.messages || c.unread.marks) ? <UnreadBadge unread={c.unread} /> : null}
              {c.expert ? <span>Expert: {c.expert.name}</span> : null}
              {c.deadlineAt && c.deadlineRisk ? (
                <span>
                  Due <Deadline c={c} />
                </span>
              ) : null}
            </div>
            <div className="mt-2 flex items-center justify-between gap-2">
              <Codes codes={codeStrings(c.codes)} />
              <span className="text-xs text-ink-500">{formatDate(c.updatedAt)}</span>
            </div>
          </Link>
        </li>
      ))}
    </ul>
  );
}

function Pager({
  params,
  onChange,
  total,
}: {
  params: CaseListParams;
  onChange: (p: CaseListParams) => void;
  total: number;
}) {
  const id = useId();
  const pageCount = Math.max(1, Math.ceil(total / params.pageSize));
  return (
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
      <label htmlFor={id} className="ml-auto text-sm text-ink-600">
        Per page
      </label>
      <select
        id={id}
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
  );
}

function Empty({ filtered, canOpen, onClear }: { filtered: boolean; canOpen: boolean; onClear: () => void }) {
  return (
    <div className="rounded-xl border border-dashed border-ink-300 bg-white px-6 py-10 text-center">
      {filtered ? (
        <>
          <p className="text-lg font-semibold">No cases match these filters.</p>
          <button type="button" className={`${buttonClass.secondary} mt-4`} onClick={onClear}>
            Clear the filters
          </button>
        </>
      ) : canOpen ? (
        <>
          <p className="text-lg font-semibold">No cases yet.</p>
          <p className="mt-1 text-ink-600">
            Open a case with the vehicle, the complaint and your scope captures; an expert answers it.
          </p>
          <Link to={casePages.new} className={`${buttonClass.primary} mt-4`}>
            Open your first case
          </Link>
        </>
      ) : (
        <p className="text-lg font-semibold">No cases yet.</p>
      )}
    </div>
  );
}

/**
 * The cases a reader may see: filters, sortable columns and pages, all worked out by the server;
 * what each case waits on, its expert, its answer deadline and (for a shop's people) what is new
 * on it. On a phone the rows become cards.
 */
export function CaseList(props: {
  params: CaseListParams;
  onChange: (p: CaseListParams) => void;
  /** false for experts and admins, who do not open cases */
  canOpen?: boolean;
  reader?: ListReader;
  /** the admin's filter choices */
  options?: CaseFiltersView;
}) {
  const { params, onChange, canOpen = true, reader = "shop", options } = props;
  const list = useCaseList(params);
  const [q, setQ] = useState(params.q ?? "");
  const [vehicle, setVehicle] = useState(params.vehicle ?? "");
  const dq = useDebounced(q);
  const dv = useDebounced(vehicle);
  useEffect(() => {
    if ((params.q ?? "") !== dq || (params.vehicle ?? "") !== dv)
      onChange({ ...params, q: dq || undefined, vehicle: dv || undefined, page: 1 });
    // only typing starts a new search; params and onChange change with every page
    // eslint-disable-next-line react-hooks/exhaustive-deps -- see the line above
  }, [dq, dv]);
  const total = list.data?.total ?? 0;
  const filtered = !!(
    params.q ||
    params.vehicle ||
    params.status ||
    params.state ||
    params.deadline ||
    params.expertId ||
    params.shopId
  );
  const whose = reader === "admin" ? "All cases" : reader === "expert" ? "Your cases" : "Cases of your shop";
  const caption = `${whose}, ${total} in all`;
  const clear = () => {
    setQ("");
    setVehicle("");
    onChange({ page: 1, pageSize: params.pageSize, sort: params.sort, dir: params.dir });
  };
  return (
    <div className="space-y-4">
      <Filters
        params={params}
        onChange={onChange}
        reader={reader}
        options={options}
        q={q}
        setQ={setQ}
        vehicle={vehicle}
        setVehicle={setVehicle}
      />
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
        <Empty filtered={filtered} canOpen={canOpen} onClear={clear} />
      ) : (
        <div aria-busy={list.isFetching || undefined}>
          <CaseTable items={list.data.items} params={params} onChange={onChange} reader={reader} caption={caption} />
          <CaseCards items={list.data.items} reader={reader} caption={caption} />
          <Pager params={params} onChange={onChange} total={total} />
        </div>
      )}
    </div>
  );
}
