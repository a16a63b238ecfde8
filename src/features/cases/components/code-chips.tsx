import { useId, useState, type KeyboardEvent } from "react";
import { LIMITS } from "../../../../shared/schemas/case";
import { normalizeDtc, parseDtc, type ParsedDtc } from "../../../../shared/domain/dtc";
import { buttonClass, FieldError, inputClass } from "./ui";

/** What a chip says about a code besides the code itself. */
export function dtcDetails(p: ParsedDtc): { description: string; tags: string[] } {
  const tags: string[] = [];
  if (p.misfireCylinder !== undefined) tags.push(`Cylinder ${p.misfireCylinder}`);
  if (p.coil !== undefined) tags.push(`Coil ${p.coil}`);
  if (!p.generic) tags.push("Maker-specific");
  return { description: p.description ?? "No generic description", tags };
}

export function CodeChip({ code, onRemove }: { code: string; onRemove?: () => void }) {
  const p = parseDtc(code);
  const details = p.ok ? dtcDetails(p) : { description: p.error.message, tags: [] };
  return (
    <li className="flex min-h-11 max-w-full items-start gap-2 rounded-lg border border-ink-200 bg-ink-50 py-1.5 pl-3 pr-1.5">
      <div className="min-w-0 flex-1">
        <div className="flex flex-wrap items-center gap-1.5">
          <span className="font-mono text-base font-bold text-ink-900">{code}</span>
          {details.tags.map((t) => (
            <span key={t} className="rounded bg-kiln-100 px-1.5 py-0.5 text-xs font-semibold text-kiln-700">
              {t}
            </span>
          ))}
        </div>
        <p className={`text-sm ${p.ok && p.description ? "text-ink-700" : "italic text-ink-500"}`}>
          {details.description}
        </p>
      </div>
      {onRemove ? (
        <button
          type="button"
          onClick={onRemove}
          className="flex h-9 w-9 flex-none items-center justify-center rounded-md text-xl leading-none text-ink-500 hover:bg-ink-200 hover:text-ink-900"
          aria-label={`Remove ${code}`}
        >
          ×
        </button>
      ) : null}
    </li>
  );
}

/**
 * Trouble codes as chips: type a code and press Enter or a comma (or paste a list). Each code is
 * checked against the SAE J2012 form; a malformed one is refused with the reason.
 */
export function CodeChips({
  value,
  onChange,
  error,
  inputId,
}: {
  value: string[];
  onChange: (codes: string[]) => void;
  error?: string;
  inputId: string;
}) {
  const [text, setText] = useState("");
  const [refusal, setRefusal] = useState<string | null>(null);
  const hintId = useId();
  const errId = useId();

  function commit(raw: string): boolean {
    const pieces = raw
      .split(/[\s,;]+/)
      .map(normalizeDtc)
      .filter(Boolean);
    if (pieces.length === 0) return true;
    const next = [...value];
    const refused: string[] = [];
    const kept: string[] = [];
    for (const c of pieces) {
      const p = parseDtc(c);
      if (!p.ok) {
        refused.push(p.error.message);
        kept.push(c);
      } else if (next.includes(p.code)) {
        refused.push(`${p.code} is already in the list.`);
      } else if (next.length >= LIMITS.codes) {
        refused.push(`At most ${LIMITS.codes} trouble codes.`);
        kept.push(c);
      } else next.push(p.code);
    }
    if (next.length !== value.length) onChange(next);
    setRefusal(refused.length ? refused.join(" ") : null);
    setText(kept.join(", "));
    return refused.length === 0;
  }

  function onKeyDown(e: KeyboardEvent<HTMLInputElement>) {
    if (e.key === "Enter" || e.key === ",") {
      e.preventDefault();
      commit(text);
    } else if (e.key === "Backspace" && text === "" && value.length) {
      onChange(value.slice(0, -1));
    }
  }

  const shown = refusal ?? error;
  return (
    <div>
      {value.length ? (
        <ul className="mb-3 grid gap-2 sm:grid-cols-2" aria-label="Trouble codes entered">
          {value.map((c) => (
            <CodeChip key={c} code={c} onRemove={() => onChange(value.filter((x) => x !== c))} />
          ))}
        </ul>
      ) : null}
      <div className="flex gap-2">
        <input
          id={inputId}
          value={text}
          onChange={(e) => {
            const v = e.target.value;
            if (/[,;]/.test(v)) commit(v);
            else {
              setText(v);
              if (refusal) setRefusal(null);
            }
          }}
          onKeyDown={onKeyDown}
          onBlur={() => text.trim() && commit(text)}
          onPaste={(e) => {
            const pasted = e.clipboardData.getData("text");
            if (/[\s,;]/.test(pasted.trim())) {
              e.preventDefault();
              commit(text + pasted);
            }
          }}
          className={`${inputClass} font-mono uppercase placeholder:normal-case placeholder:font-sans`}
          placeholder="e.g. P0304"
          aria-label="Trouble code to add"
          autoCapitalize="characters"
          autoComplete="off"
          spellCheck={false}
          enterKeyHint="done"
          aria-invalid={shown ? true : undefined}
          aria-describedby={`${hintId}${shown ? " " + errId : ""}`}
        />
        <button type="button" className={buttonClass.secondary} onClick={() => commit(text)} disabled={!text.trim()}>
          Add
        </button>
      </div>
      <p id={hintId} className="mt-1 text-sm text-ink-500">
        Press Enter or type a comma after each code. Letter P, C, B or U and four characters.
      </p>
      <FieldError id={errId} message={shown ?? undefined} />
    </div>
  );
}
