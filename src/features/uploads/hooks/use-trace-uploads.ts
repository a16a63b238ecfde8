import { useCallback, useEffect, useLayoutEffect, useRef, useState } from "react";
import { Upload } from "tus-js-client";
import { MAX_TRACE_FILE_BYTES } from "../../../../shared/trace/parse";
import type { CaptureSettings } from "../../../../shared/schemas/capture-settings";
import type { UploadedTrace } from "../api/upload-trace";
import { guessKind } from "../lib/guess-kind";
import { previewText, readHead, type TracePreview } from "../lib/preview";
import {
  copySettings,
  framingTime,
  initialSettings,
  rateUnits,
  toCaptureSettings,
  type SettingsDraft,
  type SettingsErrors,
} from "../lib/settings";
import { forgetUpload, savedPieces, savedUploads } from "../lib/upload-store";
import { restoredItem, useUploadLine } from "./use-upload-line";
import { serverMessage, type UploadItem, type UploadStatus } from "../lib/upload-item";

export { serverMessage, type UploadItem, type UploadStatus };

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
export function useTraceUploads(opts: {
  caseId: string | null;
  ensureCaseId?: () => Promise<string>;
  onUploaded?: (t: UploadedTrace) => void;
}) {
  const [items, setItems] = useState<UploadItem[]>([]);
  const itemsRef = useRef(items);
  const seq = useRef(0);
  const optsRef = useRef(opts);
  // the latest items and options for the callbacks, set once the render is committed
  useLayoutEffect(() => {
    itemsRef.current = items;
    optsRef.current = opts;
  });

  const patch = useCallback((key: string, p: Partial<UploadItem> | ((it: UploadItem) => Partial<UploadItem>)) => {
    setItems((xs) => xs.map((x) => (x.key === key ? { ...x, ...(typeof p === "function" ? p(x) : p) } : x)));
  }, []);

  const add = useCallback(
    (files: File[]) => {
      for (const file of files) {
        const key = `t${++seq.current}`;
        const again = itemsRef.current.find(
          (x) =>
            x.restored &&
            !x.file &&
            x.fileName === file.name &&
            x.fileBytes === file.size &&
            x.lastModified === file.lastModified,
        );
        if (again) {
          // the file of an upload that could not continue after a reload: start it over with it
          void forgetUpload(again.restored!.saved.key);
          if (again.restored!.saved.uploadUrl) void Upload.terminate(again.restored!.saved.uploadUrl).catch(() => {});
          patch(again.key, { file, restored: undefined, status: "ready", serverError: undefined, upload: undefined });
          continue;
        }
        const item = newItem(key, file);
        setItems((xs) => [...xs, item]);
        if (item.status === "reading") void preview(item, file, patch);
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
  useRatePreview(items, itemsRef, patch);

  // ---- one upload at a time, in the order they were started
  const line = useUploadLine(itemsRef, patch, (t) => optsRef.current.onUploaded?.(t));

  const start = useCallback(
    async (key: string) => {
      const it = itemsRef.current.find((x) => x.key === key);
      const checked = it ? settingsToSend(it) : null;
      if (!it || !checked) return;
      if (!checked.ok) return patch(key, { errors: checked.errors, status: it.status === "error" ? "error" : "ready" });
      const settings = checked.settings;
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
      line.enqueue(key, { caseId, settings });
    },
    [patch, line],
  );

  // Uploads a reload interrupted: shown again and continued from the server's last byte.
  const caseId = opts.caseId;
  useEffect(() => {
    if (!caseId) return;
    let live = true;
    void (async () => {
      for (const saved of await savedUploads(caseId)) {
        if (!live || itemsRef.current.some((x) => x.restored?.saved.key === saved.key)) continue;
        const item = restoredItem(`t${++seq.current}`, saved, await savedPieces(saved.key));
        itemsRef.current = [...itemsRef.current, item];
        setItems((xs) => [...xs, item]);
        void start(item.key);
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
      if (line.cancel(key)) return;
      const it = itemsRef.current.find((x) => x.key === key);
      if (it?.restored) {
        void forgetUpload(it.restored.saved.key);
        if (it.restored.saved.uploadUrl) void Upload.terminate(it.restored.saved.uploadUrl).catch(() => {});
      }
      if (it && (it.status === "waiting" || it.restored)) patch(key, { status: "cancelled", restored: undefined });
    },
    [patch, line],
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

  return { items, add, setDraft, copyFrom, start, startAll, cancel, remove };
}

/** The settings an item goes with, its settings' errors, or null when it cannot start now. */
function settingsToSend(
  it: UploadItem,
): { ok: true; settings: CaptureSettings } | { ok: false; errors: SettingsErrors } | null {
  if (["uploading", "waiting", "done", "reading"].includes(it.status)) return null;
  if (it.restored) return { ok: true, settings: it.restored.saved.settings };
  if (!it.file || previewBlocks(it.preview, !!it.head?.partial)) return null;
  return toCaptureSettings(it.draft, needsRate(it.preview));
}

/** Re-reads the preview of a file without a time column at the rate the tech states (for the duration). */
function useRatePreview(
  items: UploadItem[],
  itemsRef: { current: UploadItem[] },
  patch: (key: string, p: Partial<UploadItem> | ((it: UploadItem) => Partial<UploadItem>)) => void,
) {
  const rateKey = items
    .map(
      (it) =>
        `${it.key}:${needsRate(it.preview) || (it.preview?.ok && !it.preview.rateFromFile) ? (statedRate(it.draft) ?? "") : "-"}`,
    )
    .join("|");
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
          const framing =
            preview.ok && cur.draft.timePerDiv.trim() === ""
              ? framingTime((preview.trace.durationS * preview.estimatedSamples) / preview.trace.samples)
              : null;
          return framing
            ? {
                preview,
                draft: { ...cur.draft, ...framing },
                fromFile: [...cur.fromFile.filter((k) => k !== "timePerDiv"), "timePerDiv"],
              }
            : { preview };
        });
      }
    }, 300);
    return () => clearTimeout(t);
  }, [rateKey, patch, itemsRef]);
}

/** A chosen file as an item: being read (or refused at once when over the size limit). */
function newItem(key: string, file: File): UploadItem {
  const guess = guessKind(null, file.name);
  const { draft, fromFile } = initialSettings(null, guess.kind, file.name);
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
  }
  return item;
}

/** Reads the start of the file for the instant preview and the suggested settings. */
async function preview(item: UploadItem, file: File, patch: (key: string, p: Partial<UploadItem>) => void) {
  try {
    const head = await readHead(file);
    const preview = previewText(head, file.size);
    const trace = preview.ok ? preview.trace : null;
    const g = guessKind(trace, file.name);
    // frame the whole file (estimated when only its start was read); no framing without a known rate
    const whole =
      preview.ok && trace
        ? {
            ...trace,
            durationS: preview.rateFromFile ? (trace.durationS * preview.estimatedSamples) / trace.samples : NaN,
          }
        : null;
    const init = initialSettings(whole, g.kind, file.name);
    patch(item.key, { head, preview, guess: g, draft: init.draft, fromFile: init.fromFile, status: "ready" });
  } catch {
    patch(item.key, { status: "error", serverError: "The browser could not read this file." });
  }
}

function recheck(draft: SettingsDraft, it: UploadItem): SettingsErrors {
  const r = toCaptureSettings(draft, needsRate(it.preview));
  if (r.ok) return {};
  // only keep messages for fields that already had one
  const out: SettingsErrors = {};
  for (const k of Object.keys(it.errors) as (keyof SettingsErrors)[]) if (r.errors[k]) out[k] = r.errors[k];
  return out;
}
