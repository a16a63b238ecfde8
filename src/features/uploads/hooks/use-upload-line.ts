import { useCallback, useEffect, useLayoutEffect, useMemo, useRef } from "react";
import type { CaptureSettings } from "../../../../shared/schemas/capture-settings";
import type { UploadedTrace } from "../api/upload-trace";
import { CaptureUpload, warmCompressor, type UploadState } from "../lib/capture-upload";
import { guessKind } from "../lib/guess-kind";
import { initialSettings, type SettingsErrors } from "../lib/settings";
import type { SavedUpload } from "../lib/upload-store";
import { serverMessage, type UploadItem } from "../lib/upload-item";

type Patch = (key: string, p: Partial<UploadItem>) => void;
export interface LineJob {
  caseId: string;
  settings: CaptureSettings;
}

/** An upload a reload interrupted, as an item of the list (it continues without its file). */
export function restoredItem(key: string, saved: SavedUpload, pieces: Blob[]): UploadItem {
  const guess = guessKind(null, saved.fileName);
  const { draft, fromFile } = initialSettings(null, guess.kind, saved.fileName);
  return {
    key,
    file: null,
    fileName: saved.fileName,
    fileBytes: saved.fileBytes,
    lastModified: saved.lastModified,
    head: null,
    preview: null,
    guess,
    draft,
    fromFile,
    errors: {},
    status: "ready",
    progress: 0,
    restored: { saved, pieces },
  };
}

/** Share of the (estimated) compressed total sent. */
function sentShare(u: UploadState): number {
  const total = u.compressionDone
    ? u.compressedBytes
    : u.compressedRead
      ? (u.compressedBytes / u.compressedRead) * u.fileBytes
      : 0;
  return total ? Math.min(1, u.sentBytes / total) : 0;
}

/** How an ended upload leaves its item. */
function outcome(u: UploadState, it: UploadItem): Partial<UploadItem> {
  if (u.phase === "done" && u.result) return { status: "done", progress: 1, result: u.result, restored: undefined };
  if (u.phase === "cancelled") return { status: "cancelled", progress: 0, restored: undefined };
  const e = u.error;
  const errors: SettingsErrors = {};
  for (const f of (e?.details as { fields?: { path: string; message: string }[] } | undefined)?.fields ?? []) {
    const name = String(f.path)
      .replace(/^settings\./, "")
      .split(".")[0] as keyof SettingsErrors;
    if (name) errors[name] = f.message;
  }
  return {
    status: "error",
    serverError: e ? serverMessage(e) : "The upload failed. Try again.",
    errors,
    restored: e?.code === "file_needed" ? it.restored : undefined,
  };
}

/** The line's state, kept in refs by the hook. */
interface LineRefs {
  waiting: { current: string[] };
  current: { current: { key: string; upload: CaptureUpload } | null };
  jobs: { current: Map<string, LineJob> };
  done: { current: (t: UploadedTrace) => void };
}

/** Starts the next waiting upload unless one is under way (skipping keys whose item or job is gone). */
function startNext(line: LineRefs, itemsRef: { current: UploadItem[] }, patch: Patch): void {
  if (line.current.current) return;
  const key = line.waiting.current.shift();
  if (!key) return;
  const it = itemsRef.current.find((x) => x.key === key);
  const job = line.jobs.current.get(key);
  if (!it || !job) return startNext(line, itemsRef, patch);
  const r = it.restored;
  const upload = new CaptureUpload({
    key: r?.saved.key ?? `${job.caseId}:${key}:${Date.now()}`,
    caseId: job.caseId,
    file: it.file,
    fileName: it.fileName,
    fileBytes: it.fileBytes,
    lastModified: it.lastModified,
    settings: job.settings,
    traceName: r?.saved.traceName,
    restored: r ? { pieces: r.pieces, done: r.saved.compressedDone, uploadUrl: r.saved.uploadUrl } : undefined,
    onState: (u) => patch(key, { upload: u, progress: sentShare(u) }),
  });
  line.current.current = { key, upload };
  patch(key, { status: "uploading", serverError: undefined, errors: {} });
  void upload.start();
  void upload.finished.then((u) => {
    line.current.current = null;
    line.jobs.current.delete(key);
    patch(key, outcome(u, it));
    if (u.phase === "done" && u.result) line.done.current(u.result);
    startNext(line, itemsRef, patch);
  });
}

/**
 * The page's uploads go one at a time, in the order they were started (a shop's uplink does
 * better with one capture at full rate than several sharing it). Leaving the page pauses the one
 * under way; the next visit continues it.
 */
export function useUploadLine(
  itemsRef: { current: UploadItem[] },
  patch: Patch,
  onUploaded: (t: UploadedTrace) => void,
) {
  const waiting = useRef<string[]>([]);
  const current = useRef<{ key: string; upload: CaptureUpload } | null>(null);
  const jobs = useRef(new Map<string, LineJob>());
  const done = useRef(onUploaded);
  useLayoutEffect(() => {
    done.current = onUploaded;
  });

  const runNext = useCallback(() => startNext({ waiting, current, jobs, done }, itemsRef, patch), [itemsRef, patch]);

  // The compressor is loaded now, while online: a capture chosen offline is compressed all the same.
  useEffect(() => warmCompressor(), []);
  useEffect(
    () => () => {
      current.current?.upload.pause();
      current.current = null;
    },
    [],
  );

  return useMemo(
    () => ({
      enqueue(key: string, job: LineJob) {
        jobs.current.set(key, job);
        waiting.current.push(key);
        patch(key, { status: "waiting", progress: 0, serverError: undefined, errors: {}, upload: undefined });
        runNext();
      },
      /** Cancels the upload under way (true), or takes one out of the line (false: the caller tidies up). */
      cancel(key: string): boolean {
        if (current.current?.key === key) {
          void current.current.upload.cancel();
          return true;
        }
        waiting.current = waiting.current.filter((k) => k !== key);
        jobs.current.delete(key);
        return false;
      },
    }),
    [patch, runNext],
  );
}
