import { SECONDARY_SAFETY } from "../../../../shared/analysis/findings";
import { withCautionsOnce } from "../lib/cautions";
import type { Finding, Severity } from "../../../../shared/analysis/types";

const tone: Record<Severity, { box: string; badge: string; label: string }> = {
  problem: { box: "border-alarm-500 bg-alarm-500/5", badge: "bg-alarm-500 text-white", label: "Problem" },
  warning: { box: "border-kiln-400 bg-kiln-50", badge: "bg-kiln-400 text-ink-950", label: "Check" },
  info: { box: "border-ink-200 bg-white", badge: "bg-ink-200 text-ink-800", label: "Note" },
};

const order: Record<Severity, number> = { problem: 0, warning: 1, info: 2 };

/**
 * The capture review and measurement findings of a trace, worst first, each with its advice.
 * Advice about the ignition secondary carries the safety caution: it is shown once, beside the
 * first advice that carries it; when the trace is a secondary capture the caution is shown once
 * even if no finding carries it.
 */
export function FindingsList({ findings, ignition }: { findings: Finding[]; ignition?: boolean }) {
  const sorted = [...findings].sort((a, b) => order[a.severity] - order[b.severity]);
  const items = withCautionsOnce(sorted);
  const cautionShown = items.some((x) => x.caution === SECONDARY_SAFETY);
  if (!sorted.length) {
    return (
      <p className="rounded-lg border border-verdigris-500 bg-white px-3 py-2 text-sm font-semibold text-verdigris-600">
        The capture review found nothing to remark.
      </p>
    );
  }
  return (
    <ul className="space-y-2" aria-label="Findings">
      {items.map(({ f, advice, caution }, i) => {
        const t = tone[f.severity] ?? tone.info;
        return (
          <li key={`${f.code}-${i}`} className={`rounded-lg border-l-4 border px-3 py-2 ${t.box}`}>
            <div className="flex flex-wrap items-start gap-2">
              <span className={`rounded px-1.5 py-0.5 text-xs font-bold uppercase tracking-wide ${t.badge}`}>
                {t.label}
              </span>
              <p className="min-w-0 flex-1 font-semibold text-ink-900">{f.message}</p>
            </div>
            {advice ? <p className="mt-1 text-sm text-ink-700">{advice}</p> : null}
            {caution ? <Caution text={caution} /> : null}
          </li>
        );
      })}
      {ignition && !cautionShown ? (
        <li>
          <Caution text={SECONDARY_SAFETY} />
        </li>
      ) : null}
    </ul>
  );
}

function Caution({ text }: { text: string }) {
  return (
    <p
      role="note"
      className="mt-2 flex gap-2 rounded-md bg-white/70 px-2 py-1.5 text-sm text-ink-800 ring-1 ring-alarm-500/40"
    >
      <span aria-hidden="true" className="font-bold text-alarm-600">
        ⚠
      </span>
      <span>{text}</span>
    </p>
  );
}
