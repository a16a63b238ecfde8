import { useCallback, useEffect, useRef, useState } from "react";
import { Upload } from "tus-js-client";
import { MAX_TRACE_FILE_BYTES } from "../../../../shared/trace/parse";
import type { CaptureSettings } from "../../../../shared/schemas/capture-settings";
import type { UploadedTrace } from "../api/upload-trace";
import { guessKind } from "../lib/guess-kind";
import { previewText, readHead, type TracePreview } from "../lib/preview";
import { copySettings, framingTime, initialSettings, rateUnits, toCaptureSettings, type SettingsDraft, type SettingsErrors } from "../lib/settings";
import { CaptureUpload, warmCompressor, type UploadState } from "../lib/capture-upload";
import { forgetUpload, savedPieces, savedUploads, type SavedUpload } from "../lib/upload-store";

/** waiting: in line behind another upload of this page (one goes at a time) */
export type UploadStatus = "reading" | "ready" | "waiting" | "uploading" | "done" | "error" | "cancelled";

export interface UploadItem {
  key: string;
  /** null for an upload restored after a reload (its compressed bytes were kept, not the file) */
  file: File | null;
  fileName: string;
  fileBytes: number;
  lastModified: number;
  head: { text: string; partial: boolean; bytesRead: number } | null;
  preview: TracePreview | null;
  guess: { kind: SettingsDraft["kind"]; reason: string };
  draft: SettingsDraft;
  fromFile: (keyof SettingsDraft)[];
  errors: SettingsErrors;
  status: UploadStatus;
  /** share of the (estimated) compressed bytes sent */
  progress: number;
  /** the upload's live state (compressing, sending, resuming, the server's stages) */
  upload?: UploadState;
  /** carried over from before a reload: continues without the file */
  restored?: { saved: SavedUpload; pieces: Blob[] };
  serverError?: string;
  result?: UploadedTrace;
}

/** The file has no time column and its metadata gives no rate: the settings must give it. */
export function needsRate(p: TracePreview | null): boolean {
  if (!p) return false;
  return p.ok ? p.noTimeColumn && !p.rateFromFile : p.needsRate;
}

/** The preview refused a file that was read whole: the server would refuse it too. */
export function previewBlocks(p: TracePreview | null, partial: boolean): boolean {
  return !!p && !p.ok && !p.needsRate && !partial;
}

const statedRate = (d: SettingsDraft) => {
  const v = Number(d.sampleRate.replace(",", "."));
  return d.sampleRate.trim() && v > 0 ? v * rateUnits[d.rateUnit] : undefined;
};

/**
 * The queue of trace files of one case: each read and previewed in the browser, given its
 * capture settings, then uploaded with progress and a cancel. `ensureCaseId` saves the draft
 * first when the case does not exist yet.
 */
export function useTraceUploads(opts: { caseId: string | null; ensureCaseId?: () => Promise<string>; onUploaded?: (t: UploadedTrace) => void }) {
  const [items, setItems] = useState<UploadItem[]>([]);
  const itemsRef = useRef(items);
  itemsRef.current = items;
  const aborts = useRef(new Map<string, AbortController>());
  const seq = useRef(0);
  const optsRef = useRef(opts);
  optsRef.current = opts;

  const patch = useCallback((key: string, p: Partial<UploadItem> | ((it: UploadItem) => Partial<UploadItem>)) => {
    setItems((xs) => xs.map((x) => (x.key === key ? { ...x, ...(typeof p === "function" ? p(x) : p) } : x)));
  }, []);

  const add = useCallback(
    (files: File[]) => {
      for (const file of files) {
        const key = `t${++seq.current}`;
        const guess = guessKind(null, file.name);
        const { draft, fromFile } = initialSettings(null, guess.kind, file.name);
        const again = itemsRef.current.find((x) => x.restored && !x.file && x.fileName === file.name && x.fileBytes === file.size && x.lastModified === file.lastModified);
        if (again) {
          // the file of an upload that could not continue after a reload: start it over with it
          void forgetUpload(again.restored!.saved.key);
          if (again.restored!.saved.uploadUrl) void Upload.terminate(again.restored!.saved.uploadUrl).catch(() => {});
          patch(again.key, { file, restored: undefined, status: "ready", serverError: undefined, upload: undefined });
          continue;
        }
        const item: UploadItem = {
          key,
          file,
          fileName: file.name,
          fileBytes: file.size,
          lastModified: file.lastModified,
          head: null,
          preview: null,
          guess,
          draft,
          fromFile,
          errors: {},
          status: "reading",
          progress: 0,
        };
        if (file.size > MAX_TRACE_FILE_BYTES) {
          item.status = "error";
          item.serverError = `This file is ${(file.size / 1024 / 1024).toFixed(0)} MB; traces are accepted up to 200 MB. Export a shorter capture.`;
          setItems((xs) => [...xs, item]);
          continue;
        }
        setItems((xs) => [...xs, item]);
        void readHead(file).then(
          (head) => {
            const preview = previewText(head, file.size);
            const trace = preview.ok ? preview.trace : null;
            const g = guessKind(trace, file.name);
            // frame the whole file (estimated when only its start was read); no framing without a known rate
            const whole =
              preview.ok && trace
                ? { ...trace, durationS: preview.rateFromFile ? (trace.durationS * preview.estimatedSamples) / trace.samples : NaN }
                : null;
            const init = initialSettings(whole, g.kind, file.name);
            patch(key, { head, preview, guess: g, draft: init.draft, fromFile: init.fromFile, status: "ready" });
          },
          () => patch(key, { status: "error", serverError: "The browser could not read this file." }),
        );
      }
    },
    [patch],
  );

  const setDraft = useCallback(
    (key: string, draft: SettingsDraft) => {
      patch(key, (it) => ({ draft, errors: Object.keys(it.errors).length ? recheck(draft, it) : {} }));
    },
    [patch],
  );

  // A file without a time column: re-read the preview at the stated rate (for the duration).
  const rateKey = items.map((it) => `${it.key}:${needsRate(it.preview) || (it.preview?.ok && !it.preview.rateFromFile) ? statedRate(it.draft) ?? "" : "-"}`).join("|");
  useEffect(() => {
    const t = setTimeout(() => {
      for (const it of itemsRef.current) {
        if (!it.head || !it.preview || !it.file) continue;
        const noRateInFile = needsRate(it.preview) || (it.preview.ok && !it.preview.rateFromFile);
        if (!noRateInFile) continue;
        const rate = statedRate(it.draft);
        const prev = it.preview.ok ? it.preview.trace.sampleRateHz : undefined;
        if (!rate || rate === prev) continue;
        const preview = previewText(it.head, it.fileBytes, rate);
        patch(it.key, (cur) => {
          // now the duration is known: frame it when the tech has not set a time base yet
          const framing = preview.ok && cur.draft.timePerDiv.trim() === "" ? framingTime((preview.trace.durationS * preview.estimatedSamples) / preview.trace.samples) : null;
          return framing
            ? { preview, draft: { ...cur.draft, ...framing }, fromFile: [...cur.fromFile.filter((k) => k !== "timePerDiv"), "timePerDiv"] }
            : { preview };
        });
      }
    }, 300);
    return () => clearTimeout(t);
  }, [rateKey, patch]);

  // ---- one upload at a time, in the order they were started
  const line = useRef<string[]>([]);
  const current = useRef<{ key: string; upload: CaptureUpload } | null>(null);

  const runNext = useCallback(() => {
    if (current.current) return;
    const key = line.current.shift();
    if (!key) return;
    const it = itemsRef.current.find((x) => x.key === key);
    const job = it ? jobs.current.get(key) : undefined;
    if (!it || !job) return runNext();
    const upload = new CaptureUpload({
      key: it.restored?.saved.key ?? `${job.caseId}:${key}:${Date.now()}`,
      caseId: job.caseId,
      file: it.file,
      fileName: it.fileName,
      fileBytes: it.fileBytes,
      lastModified: it.lastModified,
      settings: job.settings,
      traceName: it.restored?.saved.traceName,
      restored: it.restored ? { pieces: it.restored.pieces, done: it.restored.saved.compressedDone, uploadUrl: it.restored.saved.uploadUrl } : undefined,
      onState: (u) => {
        const total = u.compressionDone ? u.compressedBytes : u.compressedRead ? (u.compressedBytes / u.compressedRead) * u.fileBytes : 0;
        patch(key, { upload: u, progress: total ? Math.min(1, u.sentBytes / total) : 0 });
      },
    });
    current.current = { key, upload };
    patch(key, { status: "uploading", serverError: undefined, errors: {} });
    void upload.start();
    void upload.finished.then((u) => {
      current.current = null;
      jobs.current.delete(key);
      if (u.phase === "done" && u.result) {
        patch(key, { status: "done", progress: 1, result: u.result, restored: undefined });
        optsRef.current.onUploaded?.(u.result);
      } else if (u.phase === "cancelled") {
        patch(key, { status: "cancelled", progress: 0, restored: undefined });
      } else {
        const e = u.error;
        const errors: SettingsErrors = {};
        for (const f of (e?.details as { fields?: { path: string; message: string }[] } | undefined)?.fields ?? []) {
          const name = String(f.path).replace(/^settings\./, "").split(".")[0] as keyof SettingsErrors;
          if (name) errors[name] = f.message;
        }
        patch(key, { status: "error", serverError: e ? serverMessage(e) : "The upload failed. Try again.", errors, restored: e?.code === "file_needed" ? it.restored : undefined });
      }
      runNext();
    });
  }, [patch]);

  const jobs = useRef(new Map<string, { caseId: string; settings: CaptureSettings }>());

  const start = useCallback(
    async (key: string) => {
      const it = itemsRef.current.find((x) => x.key === key);
      if (!it || it.status === "uploading" || it.status === "waiting" || it.status === "done" || it.status === "reading") return;
      if (!it.file && !it.restored) return;
      if (it.file && previewBlocks(it.preview, !!it.head?.partial)) return;
      let settings: CaptureSettings;
      if (it.restored) settings = it.restored.saved.settings;
      else {
        const checked = toCaptureSettings(it.draft, needsRate(it.preview));
        if (!checked.ok) {
          patch(key, { errors: checked.errors, status: it.status === "error" ? "error" : "ready" });
          return;
        }
        settings = checked.settings;
      }
      let caseId = optsRef.current.caseId;
      try {
        if (!caseId) {
          if (!optsRef.current.ensureCaseId) throw new Error("Save the case first.");
          caseId = await optsRef.current.ensureCaseId();
        }
      } catch (e) {
        patch(key, { status: "error", serverError: e instanceof Error ? e.message : "Save the case first." });
        return;
      }
      jobs.current.set(key, { caseId, settings });
      line.current.push(key);
      patch(key, { status: "waiting", progress: 0, serverError: undefined, errors: {}, upload: undefined });
      runNext();
    },
    [patch, runNext],
  );

  // Uploads a reload interrupted: shown again and continued from the server's last byte.
  const caseId = opts.caseId;
  useEffect(() => {
    if (!caseId) return;
    let live = true;
    void (async () => {
      for (const saved of await savedUploads(caseId)) {
        if (!live || itemsRef.current.some((x) => x.restored?.saved.key === saved.key)) continue;
        const pieces = await savedPieces(saved.key);
        const key = `t${++seq.current}`;
        const guess = guessKind(null, saved.fileName);
        const { draft, fromFile } = initialSettings(null, guess.kind, saved.fileName);
        const item: UploadItem = {
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
        itemsRef.current = [...itemsRef.current, item];
        setItems((xs) => [...xs, item]);
        void start(key);
      }
    })();
    return () => {
      live = false;
    };
  }, [caseId, start]);

  /** The settings of `fromKey` for `toKey` too (its cylinder, coil, circuit and sensor stay). */
  const copyFrom = useCallback(
    (fromKey: string, toKey: string) => {
      const from = itemsRef.current.find((x) => x.key === fromKey);
      if (!from) return;
      patch(toKey, (to) => ({
        draft: copySettings(from.draft, to.draft),
        fromFile: to.fromFile.filter((k) => k === "cylinder" || k === "coil"),
        errors: {},
      }));
    },
    [patch],
  );

  /** Stops an upload for good (and removes what the server has of it); one in line leaves the line. */
  const cancel = useCallback(
    (key: string) => {
      if (current.current?.key === key) return void current.current.upload.cancel();
      line.current = line.current.filter((k) => k !== key);
      const it = itemsRef.current.find((x) => x.key === key);
      if (it?.restored) {
        void forgetUpload(it.restored.saved.key);
        if (it.restored.saved.uploadUrl) void Upload.terminate(it.restored.saved.uploadUrl).catch(() => {});
      }
      if (it && (it.status === "waiting" || it.restored)) patch(key, { status: "cancelled", restored: undefined });
    },
    [patch],
  );
  const remove = useCallback(
    (key: string) => {
      cancel(key);
      setItems((xs) => xs.filter((x) => x.key !== key));
    },
    [cancel],
  );
  const startAll = useCallback(async () => {
    for (const it of itemsRef.current) {
      if (it.status === "ready" || it.status === "cancelled" || it.status === "error") await start(it.key);
    }
  }, [start]);

  // The compressor is loaded now, while online: a capture chosen offline is compressed all the same.
  useEffect(() => warmCompressor(), []);

  // Leaving the page pauses the upload under way: the next visit continues it.
  useEffect(
    () => () => {
      current.current?.upload.pause();
      current.current = null;
    },
    [],
  );

  return { items, add, setDraft, copyFrom, start, startAll, cancel, remove };
}

function recheck(draft: SettingsDraft, it: UploadItem): SettingsErrors {
  const r = toCaptureSettings(draft, needsRate(it.preview));
  if (r.ok) return {};
  // only keep messages for fields that already had one
  const out: SettingsErrors = {};
  for (const k of Object.keys(it.errors) as (keyof SettingsErrors)[]) if (r.errors[k]) out[k] = r.errors[k];
  return out;
}

/** The server's refusal in plain words, with the line when it names one. */
function serverMessage(e: { status: number; code: string; message: string; details?: Record<string, unknown> }): string {
  const line = typeof e.details?.line === "number" ? e.details.line : null;
  let msg = e.message.charAt(0).toUpperCase() + e.message.slice(1);
  if (line !== null && !/line\s+\d+/i.test(msg)) msg = `Line ${line}: ${msg}`;
  if (e.status === 413) return `Too large: ${msg}`;
  if (e.status === 415) return `Not a trace file: ${msg}`;
  if (e.status === 0) return msg;
  return msg;
}
