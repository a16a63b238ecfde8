/**
 * Small form and layout pieces of the cases area. Sizes keep touch targets at least 44 px tall
 * (gloved hands in the service bay).
 */
import type { ReactNode } from "react";

/** An input's look without its width (for boxes sized by their row, e.g. a unit next to a number). */
export const inputBase =
  "block min-h-11 rounded-lg border border-ink-300 bg-white px-3 py-2 text-base text-ink-900 placeholder:text-ink-400 focus:border-kiln-500 focus:outline-none focus:ring-2 focus:ring-kiln-300 aria-[invalid=true]:border-alarm-500 disabled:bg-ink-50 disabled:text-ink-500";

export const inputClass = `${inputBase} w-full min-w-0`;

export const buttonClass = {
  primary:
    "inline-flex min-h-11 items-center justify-center gap-2 rounded-lg bg-kiln-500 px-4 py-2 font-semibold text-ink-950 shadow-sm hover:bg-kiln-400 disabled:opacity-50 disabled:cursor-not-allowed",
  secondary:
    "inline-flex min-h-11 items-center justify-center gap-2 rounded-lg border border-ink-300 bg-white px-4 py-2 font-semibold text-ink-800 hover:bg-ink-50 disabled:opacity-50 disabled:cursor-not-allowed",
  quiet:
    "inline-flex min-h-11 items-center justify-center gap-2 rounded-lg px-3 py-2 font-semibold text-ink-700 hover:bg-ink-100",
};

export function Section({
  title,
  children,
  description,
  id,
}: {
  title: string;
  description?: ReactNode;
  children: ReactNode;
  id?: string;
}) {
  return (
    <section
      aria-labelledby={id ? `${id}-title` : undefined}
      className="min-w-0 rounded-xl border border-ink-200 bg-white p-4 shadow-sm sm:p-5"
    >
      <h2 id={id ? `${id}-title` : undefined} className="text-lg font-bold text-ink-900">
        {title}
      </h2>
      {description ? <p className="mt-1 text-sm text-ink-600">{description}</p> : null}
      <div className="mt-4 space-y-4">{children}</div>
    </section>
  );
}

export function FieldError({ id, message }: { id: string; message?: string }) {
  if (!message) return null;
  return (
    <p id={id} role="alert" className="mt-1 text-sm font-semibold text-alarm-600">
      {message}
    </p>
  );
}

export function FieldHint({ id, children }: { id: string; children?: ReactNode }) {
  if (!children) return null;
  return (
    <p id={id} className="mt-1 text-sm text-ink-500">
      {children}
    </p>
  );
}

export function Label({ htmlFor, children, optional }: { htmlFor: string; children: ReactNode; optional?: boolean }) {
  return (
    <label htmlFor={htmlFor} className="mb-1 block text-sm font-semibold text-ink-800">
      {children}
      {optional ? <span className="ml-1 font-normal text-ink-500">(optional)</span> : null}
    </label>
  );
}

/** A labelled box with a big checkbox or radio inside, the whole box clickable. */
export function ChoiceBox({ children, checked }: { children: ReactNode; checked?: boolean }) {
  return (
    <label
      className={`flex min-h-11 cursor-pointer items-center gap-3 rounded-lg border px-3 py-2 text-sm has-[:focus-visible]:ring-2 has-[:focus-visible]:ring-kiln-400 ${
        checked
          ? "border-kiln-500 bg-kiln-50 text-ink-900"
          : "border-ink-200 bg-white text-ink-700 hover:border-ink-300"
      }`}
    >
      {children}
    </label>
  );
}
