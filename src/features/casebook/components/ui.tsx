/** Small pieces of the casebook's screens (touch targets at least 44 px tall). */
import type { ReactNode } from "react";

export const buttonClass = {
  primary:
    "inline-flex min-h-11 items-center justify-center gap-2 rounded-lg bg-kiln-500 px-4 py-2 font-semibold text-ink-950 shadow-sm hover:bg-kiln-400 disabled:cursor-not-allowed disabled:opacity-50",
  secondary:
    "inline-flex min-h-11 items-center justify-center gap-2 rounded-lg border border-ink-300 bg-white px-4 py-2 font-semibold text-ink-800 hover:bg-ink-50 disabled:cursor-not-allowed disabled:opacity-50",
  quiet:
    "inline-flex min-h-11 items-center justify-center gap-2 rounded-lg px-3 py-2 font-semibold text-ink-700 hover:bg-ink-100",
};

export const inputClass =
  "block w-full min-h-11 rounded-lg border border-ink-300 bg-white px-3 py-2 text-base text-ink-900 placeholder:text-ink-400 focus:border-kiln-500 focus:outline-none focus:ring-2 focus:ring-kiln-300";

export function Panel({
  title,
  children,
  id,
  actions,
}: {
  title: string;
  children: ReactNode;
  id: string;
  actions?: ReactNode;
}) {
  return (
    <section
      aria-labelledby={`${id}-title`}
      className="min-w-0 rounded-xl border border-ink-200 bg-white p-4 shadow-sm sm:p-5 print:border-0 print:p-0 print:shadow-none"
    >
      <div className="flex flex-wrap items-center gap-2">
        <h2 id={`${id}-title`} className="flex-1 text-lg font-bold text-ink-900">
          {title}
        </h2>
        {actions}
      </div>
      <div className="mt-3 space-y-3">{children}</div>
    </section>
  );
}

export function CodeChip({ code }: { code: string }) {
  return (
    <span className="inline-flex items-center rounded-md bg-ink-100 px-2 py-0.5 font-mono text-sm font-semibold text-ink-800">
      {code}
    </span>
  );
}
