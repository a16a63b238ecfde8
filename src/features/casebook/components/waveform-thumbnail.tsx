import { useState } from "react";
import { casebookPaths } from "../api/paths";

/**
 * A small picture of the entry's first published trace (server-rendered SVG, cached by the browser
 * with its ETag). Decorative beside the entry's words: it is left out if it cannot be loaded.
 */
export function WaveformThumbnail({ entryId, className = "" }: { entryId: string; className?: string }) {
  const [failed, setFailed] = useState(false);
  if (failed) return null;
  return (
    <img
      src={casebookPaths.thumbnail(entryId)}
      alt=""
      width={160}
      height={48}
      loading="lazy"
      decoding="async"
      onError={() => setFailed(true)}
      data-thumbnail={entryId}
      className={`block h-12 w-40 shrink-0 rounded border border-ink-100 bg-ink-50 ${className}`}
    />
  );
}
