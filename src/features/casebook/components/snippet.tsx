import { snippetParts } from "../lib/snippet";

/**
 * A search snippet with its matches marked. The text is rendered as React text nodes (never as
 * HTML), so whatever the stored text contains stays text.
 */
export function Snippet({ text, className }: { text: string; className?: string }) {
  return (
    <p className={className}>
      {snippetParts(text).map((p, i) =>
        p.mark ? (
          <mark key={i} className="rounded-sm bg-kiln-100 px-0.5 font-semibold text-ink-950">
            {p.text}
          </mark>
        ) : (
          <span key={i}>{p.text}</span>
        ),
      )}
    </p>
  );
}
