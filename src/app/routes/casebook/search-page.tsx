import { useState, type FormEvent } from "react";
import { useSearchParams } from "react-router-dom";
import {
  useCasebookSearch,
  SEARCH_PARAM_NAMES,
  type CasebookSearchParams,
} from "../../../features/casebook/api/search-casebook";
import { ActiveFilters, FacetGroup } from "../../../features/casebook/components/facet-chips";
import { Pagination, ResultList } from "../../../features/casebook/components/result-list";
import { buttonClass, inputClass } from "../../../features/casebook/components/ui";
import { facetTitles, systemNames } from "../../../features/casebook/lib/labels";
import type { CasebookSearchResult, FacetCount, FacetDim } from "../../../../shared/schemas/casebook";

const FILTER_DIMS: FacetDim[] = ["make", "model", "engine", "system", "code", "confirmed"];

/** /casebook — search resolved cases by vehicle, code, symptom and fix; facets as filter chips. */
export function CasebookSearchPage() {
  const [sp, setSp] = useSearchParams();
  const params: CasebookSearchParams = Object.fromEntries(
    SEARCH_PARAM_NAMES.map((k) => [k, sp.get(k) ?? undefined]).filter(([, v]) => v !== undefined),
  );
  const q = useCasebookSearch(params);
  const [text, setText] = useState(params.q ?? "");
  const [years, setYears] = useState({ from: params.yearFrom ?? "", to: params.yearTo ?? "" });
  // on a phone the filters fold away behind a button, so the results come right after the search
  const [filtersOpen, setFiltersOpen] = useState(false);
  // the box follows the address: when the search parameters change, it shows their query again
  const [shownFor, setShownFor] = useState(sp);
  if (shownFor !== sp) {
    setShownFor(sp);
    setText(sp.get("q") ?? "");
  }

  const update = (changes: Partial<Record<keyof CasebookSearchParams, string | undefined>>, keepPage = false) => {
    const next = new URLSearchParams(sp);
    for (const [k, v] of Object.entries(changes)) {
      if (v === undefined || v === "") next.delete(k);
      else next.set(k, v);
    }
    if (!keepPage) next.delete("page");
    setSp(next);
  };
  const submit = (e: FormEvent) => {
    e.preventDefault();
    update({ q: text.trim() || undefined });
  };

  const data = q.data;
  const active = activeFilters(params, data);

  return (
    <div className="space-y-5">
      <header>
        <h1 className="text-2xl font-bold">Casebook</h1>
        <p className="text-ink-600">
          Resolved cases, anonymised: find the fix by vehicle, trouble code, symptom or what the waveform showed.
        </p>
      </header>

      <SearchForm
        text={text}
        onText={setText}
        onSubmit={submit}
        sort={params.sort ?? "relevance"}
        onSort={(sort) => update({ sort: sort === "relevance" ? undefined : sort })}
      />

      <div className="grid gap-5 lg:grid-cols-[minmax(0,18rem)_minmax(0,1fr)]">
        <button
          type="button"
          className={`${buttonClass.secondary} lg:hidden`}
          aria-expanded={filtersOpen}
          aria-controls="casebook-filters"
          onClick={() => setFiltersOpen((o) => !o)}
        >
          {filtersOpen ? "Hide the filters" : "Filter by make, model, code…"}
        </button>
        <aside
          id="casebook-filters"
          aria-label="Filters"
          className={`space-y-4 ${filtersOpen ? "" : "hidden"} lg:block`}
        >
          {data ? (
            <>
              {FILTER_DIMS.map((d) => (
                <FacetGroup
                  key={d}
                  dim={d}
                  facets={data.facets[d] ?? []}
                  selected={params[d as keyof CasebookSearchParams]}
                  onSelect={(v) => update({ [d]: v })}
                />
              ))}
              <YearFilter
                years={years}
                onYears={setYears}
                facets={data.facets.year ?? []}
                onApply={(from, to) => update({ yearFrom: from || undefined, yearTo: to || undefined })}
              />
            </>
          ) : null}
        </aside>

        <section aria-labelledby="results-title" className="min-w-0 space-y-4" aria-busy={q.isFetching}>
          <ActiveFilters
            filters={active}
            onRemove={(k) => {
              if (k === "years") {
                setYears({ from: "", to: "" });
                update({ yearFrom: undefined, yearTo: undefined });
              } else update({ [k]: undefined });
            }}
            onClear={() => {
              setYears({ from: "", to: "" });
              setSp(params.q ? new URLSearchParams({ q: params.q }) : new URLSearchParams());
            }}
          />
          <h2 id="results-title" className="text-lg font-bold">
            {data ? (data.total === 1 ? "1 case" : `${data.total.toLocaleString("en-US")} cases`) : "Searching…"}
          </h2>
          {q.isError ? (
            <p role="alert" className="rounded-xl border border-alarm-500 bg-white p-4 font-semibold text-alarm-600">
              The search failed: {q.error.message}
            </p>
          ) : null}
          {q.isPending ? (
            <div className="space-y-3" aria-label="Loading results">
              {[0, 1, 2].map((i) => (
                <div key={i} className="h-32 animate-pulse rounded-xl bg-ink-100" />
              ))}
            </div>
          ) : data && data.total === 0 ? (
            <NoResults filtered={!!params.q || active.length > 0} />
          ) : data ? (
            <>
              <ResultList results={data.results} />
              <Pagination page={data.page} pages={data.pages} onPage={(p) => update({ page: String(p) }, true)} />
            </>
          ) : null}
        </section>
      </div>
    </div>
  );
}

type ActiveFilter = { key: string; label: string };

/** The filters in force, as chips: each dimension's value by its label, then the model-year range. */
function activeFilters(params: CasebookSearchParams, data: CasebookSearchResult | undefined): ActiveFilter[] {
  const active: ActiveFilter[] = [];
  for (const d of FILTER_DIMS) {
    const v = params[d as keyof CasebookSearchParams];
    if (!v) continue;
    const f = data?.facets[d]?.find((x) => x.value === v);
    const label =
      d === "system"
        ? (systemNames[v] ?? v)
        : d === "confirmed"
          ? v === "true"
            ? "Fix confirmed"
            : "Not confirmed"
          : (f?.label ?? v);
    active.push({ key: d, label: `${facetTitles[d]}: ${label}` });
  }
  if (params.yearFrom || params.yearTo)
    active.push({ key: "years", label: `Model year ${params.yearFrom ?? "…"}–${params.yearTo ?? "…"}` });
  return active;
}

/** The search box and the sort order. */
function SearchForm({
  text,
  onText,
  onSubmit,
  sort,
  onSort,
}: {
  text: string;
  onText: (text: string) => void;
  onSubmit: (e: FormEvent) => void;
  sort: string;
  onSort: (sort: string) => void;
}) {
  return (
    <form role="search" onSubmit={onSubmit} className="flex flex-wrap gap-2">
      <label htmlFor="casebook-q" className="sr-only">
        Search the casebook
      </label>
      <input
        id="casebook-q"
        type="search"
        className={`${inputClass} min-w-[12rem] flex-1`}
        placeholder="e.g. misfire coil 4, P0303, crank sensor hot"
        value={text}
        maxLength={200}
        onChange={(e) => onText(e.target.value)}
      />
      <button type="submit" className={buttonClass.primary}>
        Search
      </button>
      <label className="flex items-center gap-2 text-sm font-semibold text-ink-700">
        Sort
        <select className={`${inputClass} w-auto`} value={sort} onChange={(e) => onSort(e.target.value)}>
          <option value="relevance">Best match</option>
          <option value="recent">Newest</option>
        </select>
      </label>
    </form>
  );
}

type Years = { from: string; to: string };

/** The model-year filter: a from–to range, or one of the years found, as chips. */
function YearFilter({
  years,
  onYears,
  facets,
  onApply,
}: {
  years: Years;
  onYears: (y: Years) => void;
  facets: FacetCount[];
  onApply: (from: string, to: string) => void;
}) {
  return (
    <fieldset>
      <legend className="mb-2 text-sm font-bold text-ink-800">{facetTitles.year}</legend>
      <form
        className="flex flex-wrap items-end gap-2"
        onSubmit={(e) => {
          e.preventDefault();
          onApply(years.from, years.to);
        }}
      >
        <label className="text-sm text-ink-700">
          From
          <input
            className={`${inputClass} w-24`}
            inputMode="numeric"
            pattern="[0-9]{4}"
            value={years.from}
            onChange={(e) => onYears({ ...years, from: e.target.value })}
          />
        </label>
        <label className="text-sm text-ink-700">
          To
          <input
            className={`${inputClass} w-24`}
            inputMode="numeric"
            pattern="[0-9]{4}"
            value={years.to}
            onChange={(e) => onYears({ ...years, to: e.target.value })}
          />
        </label>
        <button type="submit" className={buttonClass.secondary}>
          Apply
        </button>
      </form>
      <div className="mt-2 flex flex-wrap gap-1.5">
        {facets.slice(0, 12).map((y) => (
          <button
            key={y.value}
            type="button"
            className="min-h-11 rounded-full border border-ink-200 bg-white px-3 text-sm hover:border-ink-400"
            onClick={() => {
              onYears({ from: y.value, to: y.value });
              onApply(y.value, y.value);
            }}
          >
            {y.label} <span className="text-xs text-ink-500">{y.count}</span>
          </button>
        ))}
      </div>
    </fieldset>
  );
}

/** No result: an empty casebook, or nothing matching the search and filters. */
function NoResults({ filtered }: { filtered: boolean }) {
  return (
    <div className="rounded-xl border border-dashed border-ink-300 bg-white p-6 text-center">
      {filtered ? (
        <>
          <p className="font-semibold">No resolved case matches that yet.</p>
          <p className="mt-1 text-sm text-ink-600">Try fewer words, a trouble code on its own, or remove a filter.</p>
        </>
      ) : (
        <>
          <p className="font-semibold">The casebook is empty so far.</p>
          <p className="mt-1 text-sm text-ink-600">Every case whose fix the shop confirms joins it, anonymised.</p>
        </>
      )}
    </div>
  );
}
