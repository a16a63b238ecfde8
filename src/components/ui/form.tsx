/**
 * Shared form and feedback pieces: labelled fields with hint and error wired by aria attributes,
 * buttons with touch-sized targets (44 px), notices. Palette: ink / kiln / verdigris / alarm.
 */
import { forwardRef, useId, useState, type ComponentPropsWithoutRef, type ReactNode } from "react";

export const inputClass =
  "block w-full min-h-11 rounded-lg border border-ink-300 bg-white px-3 py-2 text-base text-ink-900 placeholder:text-ink-400 focus:border-kiln-500 focus:outline-none focus:ring-2 focus:ring-kiln-300 aria-[invalid=true]:border-alarm-500 disabled:bg-ink-50 disabled:text-ink-500";

export const buttonClass = {
  primary:
    "inline-flex min-h-11 items-center justify-center gap-2 rounded-lg bg-kiln-500 px-4 py-2 font-semibold text-ink-950 shadow-sm hover:bg-kiln-400 disabled:cursor-not-allowed disabled:opacity-50",
  secondary:
    "inline-flex min-h-11 items-center justify-center gap-2 rounded-lg border border-ink-300 bg-white px-4 py-2 font-semibold text-ink-800 hover:bg-ink-50 disabled:cursor-not-allowed disabled:opacity-50",
  danger:
    "inline-flex min-h-11 items-center justify-center gap-2 rounded-lg border border-alarm-500 bg-white px-4 py-2 font-semibold text-alarm-600 hover:bg-alarm-500 hover:text-white disabled:cursor-not-allowed disabled:opacity-50",
  quiet:
    "inline-flex min-h-11 items-center justify-center gap-2 rounded-lg px-3 py-2 font-semibold text-ink-700 hover:bg-ink-100",
};

interface FieldFrameProps {
  id: string;
  label: ReactNode;
  hint?: ReactNode;
  error?: string;
  optional?: boolean;
  children: ReactNode;
}

/** Label above, the control, then the hint and the error (announced). */
export function FieldFrame({ id, label, hint, error, optional, children }: FieldFrameProps) {
  return (
    <div>
      <label htmlFor={id} className="mb-1 block text-sm font-semibold text-ink-800">
        {label}
        {optional ? <span className="ml-1 font-normal text-ink-500">(optional)</span> : null}
      </label>
      {children}
      {hint ? (
        <p id={`${id}-hint`} className="mt-1 text-sm text-ink-500">
          {hint}
        </p>
      ) : null}
      {error ? (
        <p id={`${id}-error`} role="alert" className="mt-1 text-sm font-semibold text-alarm-600">
          {error}
        </p>
      ) : null}
    </div>
  );
}

const describedBy = (id: string, hint: unknown, error: unknown) =>
  [hint ? `${id}-hint` : "", error ? `${id}-error` : ""].filter(Boolean).join(" ") || undefined;

type InputProps = ComponentPropsWithoutRef<"input"> & {
  label: ReactNode;
  hint?: ReactNode;
  error?: string;
  optional?: boolean;
};

/** A labelled text input; spread react-hook-form's `register(...)` into it. */
export const TextField = forwardRef<HTMLInputElement, InputProps>(function TextField(
  { label, hint, error, optional, id, className, ...rest },
  ref,
) {
  const auto = useId();
  const fid = id ?? auto;
  return (
    <FieldFrame id={fid} label={label} hint={hint} error={error} optional={optional}>
      <input
        ref={ref}
        id={fid}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy(fid, hint, error)}
        className={`${inputClass} ${className ?? ""}`}
        {...rest}
      />
    </FieldFrame>
  );
});

/** An e-mail address field: the e-mail keyboard on phones, no automatic capital. */
export const EmailField = forwardRef<HTMLInputElement, Omit<InputProps, "type" | "label"> & { label?: ReactNode }>(
  function EmailField({ label = "E-mail address", autoComplete = "email", ...rest }, ref) {
    return (
      <TextField
        ref={ref}
        label={label}
        type="email"
        autoComplete={autoComplete}
        inputMode="email"
        autoCapitalize="none"
        {...rest}
      />
    );
  },
);

/** A password input with a show/hide toggle (long passphrases are easier to type when visible). */
export const PasswordField = forwardRef<HTMLInputElement, Omit<InputProps, "type">>(function PasswordField(
  { label, hint, error, id, ...rest },
  ref,
) {
  const auto = useId();
  const fid = id ?? auto;
  const [shown, setShown] = useState(false);
  return (
    <FieldFrame id={fid} label={label} hint={hint} error={error}>
      <div className="flex gap-2">
        <input
          ref={ref}
          id={fid}
          type={shown ? "text" : "password"}
          aria-invalid={error ? true : undefined}
          aria-describedby={describedBy(fid, hint, error)}
          className={inputClass}
          spellCheck={false}
          autoCapitalize="none"
          {...rest}
        />
        <button
          type="button"
          className={`${buttonClass.secondary} shrink-0 px-3`}
          aria-pressed={shown}
          aria-controls={fid}
          onClick={() => setShown((v) => !v)}
        >
          {shown ? "Hide" : "Show"}
        </button>
      </div>
    </FieldFrame>
  );
});

type TextAreaProps = ComponentPropsWithoutRef<"textarea"> & {
  label: ReactNode;
  hint?: ReactNode;
  error?: string;
  optional?: boolean;
};

export const TextArea = forwardRef<HTMLTextAreaElement, TextAreaProps>(function TextArea(
  { label, hint, error, optional, id, className, ...rest },
  ref,
) {
  const auto = useId();
  const fid = id ?? auto;
  return (
    <FieldFrame id={fid} label={label} hint={hint} error={error} optional={optional}>
      <textarea
        ref={ref}
        id={fid}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy(fid, hint, error)}
        className={`${inputClass} min-h-28 ${className ?? ""}`}
        {...rest}
      />
    </FieldFrame>
  );
});

export function Notice({
  tone = "info",
  title,
  children,
}: {
  tone?: "info" | "success" | "error";
  title?: ReactNode;
  children?: ReactNode;
}) {
  const tones = {
    info: "border-ink-200 bg-ink-50 text-ink-800",
    success: "border-verdigris-500 bg-white text-ink-900",
    error: "border-alarm-500 bg-white text-ink-900",
  };
  const bar = { info: "bg-ink-400", success: "bg-verdigris-500", error: "bg-alarm-500" };
  return (
    <div
      role={tone === "error" ? "alert" : "status"}
      className={`relative overflow-hidden rounded-lg border py-3 pl-5 pr-4 ${tones[tone]}`}
    >
      <span aria-hidden className={`absolute inset-y-0 left-0 w-1.5 ${bar[tone]}`} />
      {title ? <p className="font-semibold">{title}</p> : null}
      {children ? <div className={`text-sm ${title ? "mt-1" : ""}`}>{children}</div> : null}
    </div>
  );
}

export function Card({
  title,
  children,
  actions,
  id,
}: {
  title?: ReactNode;
  children: ReactNode;
  actions?: ReactNode;
  id?: string;
}) {
  return (
    <section
      aria-labelledby={title && id ? `${id}-title` : undefined}
      className="rounded-xl border border-ink-200 bg-white p-4 shadow-sm sm:p-5"
    >
      {title || actions ? (
        <div className="mb-3 flex flex-wrap items-center justify-between gap-2">
          {title ? (
            <h2 id={id ? `${id}-title` : undefined} className="text-lg font-bold text-ink-900">
              {title}
            </h2>
          ) : null}
          {actions}
        </div>
      ) : null}
      {children}
    </section>
  );
}
