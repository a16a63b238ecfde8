import type { Annotation, AnnotationKind } from "../types";
import { formatLevel, formatTime, type ChannelUnits } from "../../../lib/trace-units";

export interface AnnotationListProps {
  annotations: Annotation[];
  /** click on an item: the viewer opens that mark's trace and centres the mark */
  onJump: (a: Annotation) => void;
  selectedId?: string | null;
  /** trace names by id, shown when the list spans several traces */
  traceNames?: Record<string, string>;
  /** the traces' order (marks are listed trace by trace, then in time) */
  traceOrder?: string[];
  /** each trace's unit model (shared/trace/units): levels are kept in the file's unit and shown in the physical one */
  units?: Record<string, Pick<ChannelUnits, "unit" | "fromFile">>;
  className?: string;
  /** the list's own height limit (default: about eight marks, then it scrolls) */
  maxHeightClass?: string;
}

const KIND_LABEL: Record<AnnotationKind, string> = { pin: "Pin", span: "Span", level: "Level", note: "Note" };

function where(a: Annotation, cu: Pick<ChannelUnits, "unit" | "fromFile"> | undefined): string {
  const level = (v: number) => (cu ? formatLevel(v * cu.fromFile, cu.unit) : formatLevel(v, "V"));
  if (a.kind === "span" && a.t1 != null) {
    const lo = Math.min(a.t0, a.t1);
    const hi = Math.max(a.t0, a.t1);
    return `${formatTime(lo)} – ${formatTime(hi)} (${formatTime(hi - lo)})`;
  }
  if (a.kind === "level" && a.level != null) return level(a.level);
  if (a.kind === "pin" && a.level != null) return `${formatTime(a.t0)} · ${level(a.level)}`;
  return formatTime(a.t0);
}

/** Marks in trace order, then in time. */
export function sortMarks(annotations: Annotation[], traceOrder: string[] = []): Annotation[] {
  const rank = (id: string) => {
    const i = traceOrder.indexOf(id);
    return i < 0 ? traceOrder.length : i;
  };
  return [...annotations].sort((a, b) =>
    a.traceId === b.traceId ? a.t0 - b.t0 : rank(a.traceId) - rank(b.traceId) || (a.traceId < b.traceId ? -1 : 1),
  );
}

/** Every mark on the case's traces; each item opens its trace at the mark. */
export function AnnotationList({
  annotations,
  onJump,
  selectedId,
  traceNames,
  traceOrder,
  units,
  className,
  maxHeightClass = "max-h-80",
}: AnnotationListProps) {
  const several = new Set(annotations.map((a) => a.traceId)).size > 1;
  const sorted = sortMarks(annotations, traceOrder);
  return (
    <div className={className}>
      <h3 className="mb-1 text-sm font-semibold text-ink-700">
        Marks{annotations.length ? ` (${annotations.length})` : ""}
      </h3>
      {sorted.length === 0 ? (
        <p className="text-sm text-ink-500">No marks yet.</p>
      ) : (
        <ul className={`flex flex-col gap-1 overflow-y-auto pr-1 ${maxHeightClass}`}>
          {sorted.map((a) => {
            const selected = a.id === selectedId;
            return (
              <li key={a.id}>
                <button
                  type="button"
                  onClick={() => onJump(a)}
                  aria-current={selected ? "true" : undefined}
                  className={`flex min-h-10 w-full items-start gap-2 rounded-md border px-2 py-1.5 text-left text-sm hover:bg-ink-50 ${
                    selected ? "border-ink-500 bg-ink-50" : "border-ink-100 bg-white"
                  } ${a.pending ? "border-dashed" : ""}`}
                >
                  <span
                    className="mt-1 inline-block h-3 w-3 shrink-0 rounded-sm"
                    style={{ background: a.color }}
                    aria-hidden="true"
                  />
                  <span className="min-w-0 flex-1">
                    <span className="block truncate text-ink-900">
                      <span className="font-semibold">{KIND_LABEL[a.kind]}</span>
                      {a.label ? ` · ${a.label}` : ""}
                    </span>
                    <span className="block text-xs text-ink-500">
                      {where(a, units?.[a.traceId])}
                      {several && traceNames?.[a.traceId] ? ` · ${traceNames[a.traceId]}` : ""}
                      {a.authorName ? ` · ${a.authorName}` : ""}
                      {a.pending ? " · sending…" : ""}
                    </span>
                  </span>
                </button>
              </li>
            );
          })}
        </ul>
      )}
    </div>
  );
}
