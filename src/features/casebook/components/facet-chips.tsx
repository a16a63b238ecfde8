import type { FacetCount, FacetDim } from "../../../../shared/schemas/casebook";
import { facetTitles, systemNames } from "../lib/labels";

const chip = (active: boolean) =>
  `inline-flex min-h-11 items-center gap-2 rounded-full border px-3 py-1.5 text-sm ${
    active
      ? "border-kiln-500 bg-kiln-100 font-semibold text-ink-950"
      : "border-ink-200 bg-white text-ink-800 hover:border-ink-400"
  }`;

export interface FacetGroupProps {
  dim: FacetDim;
  facets: FacetCount[];
  /** the value filtered on, if any */
  selected?: string;
  onSelect: (value: string | undefined) => void;
  /** how many chips before "more" */
  limit?: number;
}

function label(dim: FacetDim, f: FacetCount): string {
  if (dim === "system") return systemNames[f.value] ?? f.label;
  return f.label;
}

/**
 * One facet as filter chips with their counts. The counts are the server's: each facet counted
 * with every other filter applied, so choosing a chip gives that many results.
 */
export function FacetGroup({ dim, facets, selected, onSelect, limit = 8 }: FacetGroupProps) {
  const shown = facets.slice(0, limit);
  if (selected && !shown.some((f) => f.value === selected)) {
    const f = facets.find((x) => x.value === selected);
    shown.push(f ?? { value: selected, label: selected, count: 0 });
  }
  if (shown.length === 0) return null;
  const title = facetTitles[dim];
  return (
    <fieldset className="min-w-0">
      <legend className="mb-2 text-sm font-bold text-ink-800">{title}</legend>
      <div className="flex flex-wrap gap-2">
        {shown.map((f) => {
          const active = f.value === selected;
          return (
            <button
              key={f.value}
              type="button"
              aria-pressed={active}
              className={chip(active)}
              onClick={() => onSelect(active ? undefined : f.value)}
              title={active ? `Remove the ${title.toLowerCase()} filter` : `Only ${label(dim, f)}`}
            >
              <span>{label(dim, f)}</span>
              <span className="rounded-full bg-ink-100 px-1.5 text-xs tabular-nums text-ink-700">
                {f.count.toLocaleString("en-US")}
              </span>
              {active ? <span aria-hidden="true">×</span> : null}
            </button>
          );
        })}
      </div>
    </fieldset>
  );
}

/** The active filters as removable chips, above the results. */
export function ActiveFilters({
  filters,
  onRemove,
  onClear,
}: {
  filters: { key: string; label: string }[];
  onRemove: (key: string) => void;
  onClear: () => void;
}) {
  if (filters.length === 0) return null;
  return (
    <div className="flex flex-wrap items-center gap-2" aria-label="Active filters">
      {filters.map((f) => (
        <button
          key={f.key}
          type="button"
          className={chip(true)}
          onClick={() => onRemove(f.key)}
          aria-label={`Remove filter ${f.label}`}
        >
          {f.label} <span aria-hidden="true">×</span>
        </button>
      ))}
      <button
        type="button"
        className="min-h-11 rounded-lg px-3 text-sm font-semibold text-ink-600 underline hover:text-ink-900"
        onClick={onClear}
      >
        Clear all
      </button>
    </div>
  );
}
