import { useEffect, useRef, useState } from "react";
import type { AnnotationKind } from "../types";

export interface MarkPromptProps {
  kind: AnnotationKind;
  /** "at 18.5 ms", "18.5 ms – 20 ms" … */
  where: string;
  /** position in CSS px inside the plot box */
  x: number;
  y: number;
  boxWidth: number;
  /** trace choice in overlay mode */
  traces?: { id: string; name: string }[];
  traceId: string;
  onTraceChange?: (id: string) => void;
  onSubmit: (label: string) => void;
  onCancel: () => void;
}

const WIDTH = 272;

/** The inline label prompt for a new mark (a note needs its text; the others may stay unlabelled). */
export function MarkPrompt(p: MarkPromptProps) {
  const [label, setLabel] = useState("");
  const input = useRef<HTMLInputElement>(null);
  useEffect(() => input.current?.focus(), []);
  const narrow = p.boxWidth < WIDTH + 24;
  const style = narrow
    ? { left: 4, right: 4, top: Math.max(4, Math.min(p.y + 12, 9999)) }
    : {
        left: Math.min(Math.max(4, p.x - WIDTH / 2), p.boxWidth - WIDTH - 4),
        top: Math.max(4, p.y + 12),
        width: WIDTH,
      };
  const needsText = p.kind === "note";
  const kindName = { pin: "pin", span: "span", level: "level", note: "note" }[p.kind];
  return (
    <form
      className="absolute z-20 rounded-lg border border-ink-300 bg-white p-2 shadow-lg"
      style={style}
      onSubmit={(e) => {
        e.preventDefault();
        if (needsText && !label.trim()) return;
        p.onSubmit(label.trim());
      }}
      onKeyDown={(e) => {
        e.stopPropagation();
        if (e.key === "Escape") p.onCancel();
      }}
    >
      <label className="block text-xs text-ink-600 mb-1" htmlFor="mark-label">
        {needsText ? "Note" : "Label"} for the new {kindName} {p.where}
      </label>
      <input
        id="mark-label"
        ref={input}
        value={label}
        maxLength={200}
        onChange={(e) => setLabel(e.target.value)}
        placeholder={needsText ? "What to look at here" : "Optional"}
        className="w-full min-h-10 rounded-md border border-ink-300 px-2 text-sm"
      />
      {p.traces && p.traces.length > 1 ? (
        <label className="mt-1 flex items-center gap-2 text-xs text-ink-600">
          On
          <select
            value={p.traceId}
            onChange={(e) => p.onTraceChange?.(e.target.value)}
            className="min-h-10 flex-1 rounded-md border border-ink-300 px-1 text-sm"
          >
            {p.traces.map((t) => (
              <option key={t.id} value={t.id}>
                {t.name}
              </option>
            ))}
          </select>
        </label>
      ) : null}
      <div className="mt-2 flex justify-end gap-2">
        <button
          type="button"
          onClick={p.onCancel}
          className="min-h-10 rounded-md px-3 text-sm text-ink-700 hover:bg-ink-50"
        >
          Cancel
        </button>
        <button
          type="submit"
          disabled={needsText && !label.trim()}
          className="min-h-10 rounded-md bg-kiln-600 px-3 text-sm font-semibold text-white hover:bg-kiln-700 disabled:opacity-50"
        >
          Add {kindName}
        </button>
      </div>
    </form>
  );
}
