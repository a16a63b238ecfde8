import { useCallback, useEffect, useState } from "react";
import type { UploadProgressPayload } from "../../../../shared/realtime";
import { api } from "../../../lib/api-client";
import { roomProgressText } from "../lib/progress-text";

const FINAL = new Set(["stored", "refused", "cancelled"]);
/** A finished upload stays this long in the list (its trace appears below it meanwhile). */
const LINGER_MS = 8000;

/**
 * The captures coming into a case as the server sees them: fed by the case room's
 * `upload:progress` events (pass `onProgress` to the room), starting from the uploads already
 * under way when the page opened (GET /api/cases/:id/uploads).
 */
export function useIncomingUploads(caseId: string) {
  const [uploads, setUploads] = useState<UploadProgressPayload[]>([]);

  const onProgress = useCallback((p: UploadProgressPayload) => {
    setUploads((xs) => {
      const rest = xs.filter((x) => x.uploadId !== p.uploadId);
      return [...rest, p].sort((a, b) => a.uploadId.localeCompare(b.uploadId));
    });
    if (FINAL.has(p.stage)) {
      setTimeout(
        () => setUploads((xs) => xs.filter((x) => !(x.uploadId === p.uploadId && FINAL.has(x.stage)))),
        LINGER_MS,
      );
    }
  }, []);

  useEffect(() => {
    let live = true;
    api
      .get<{ uploads: UploadProgressPayload[] }>(`/api/cases/${encodeURIComponent(caseId)}/uploads`)
      .then((r) => live && r.uploads.forEach(onProgress))
      .catch(() => {});
    return () => {
      live = false;
    };
  }, [caseId, onProgress]);

  return { uploads, onProgress };
}

/** The list itself: one line per capture, with a bar while its bytes arrive. */
export function IncomingUploads({ uploads, youId }: { uploads: UploadProgressPayload[]; youId?: string }) {
  if (!uploads.length) return null;
  return (
    <section aria-label="Captures arriving" className="space-y-2 rounded-lg border border-ink-200 bg-ink-50 p-3">
      <h3 className="text-sm font-bold text-ink-800">Captures arriving</h3>
      <ul className="space-y-2">
        {uploads.map((u) => {
          const fraction =
            u.stage === "sending" && u.totalBytes
              ? u.receivedBytes / u.totalBytes
              : u.stage === "checking"
                ? (u.fraction ?? undefined)
                : undefined;
          return (
            <li key={u.uploadId} className="text-sm" data-testid="incoming-upload">
              <p className="font-semibold text-ink-900">
                {u.name}
                <span className="font-normal text-ink-600"> — from {u.by.userId === youId ? "you" : u.by.name}</span>
              </p>
              {u.stage === "sending" || u.stage === "checking" ? (
                <progress
                  className="h-2 w-full accent-kiln-500"
                  max={1}
                  value={fraction}
                  aria-label={`${u.name} arriving`}
                />
              ) : null}
              <p className={u.stage === "refused" ? "font-semibold text-alarm-600" : "text-ink-700"} aria-live="polite">
                {roomProgressText(u)}
              </p>
            </li>
          );
        })}
      </ul>
    </section>
  );
}
