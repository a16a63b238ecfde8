import { useCallback, useEffect, useRef, useState } from "react";
import { MAX_TRACE_FILE_BYTES } from "../../../../shared/trace/parse";
import { ApiError } from "../../../lib/api-client";
import { uploadTrace, type UploadedTrace } from "../api/upload-trace";
import { guessKind } from "../lib/guess-kind";
import { previewText, readHead, type TracePreview } from "../lib/preview";
import { copySettings, framingTime, initialSettings, rateUnits, toCaptureSettings, type SettingsDraft, type SettingsErrors } from "../lib/settings";

export type UploadStatus = "reading" | "ready" | "uploading" | "done" | "error" | "cancelled";

export interface UploadItem {
  key: string;
  file: File;
  head: { text: string; partial: boolean; bytesRead: number } | null;
  preview: TracePreview | null;
  guess: { kind: SettingsDraft["kind"]; reason: string };
  draft: SettingsDraft;
  fromFile: (keyof SettingsDraft)[];
  errors: SettingsErrors;
  status: UploadStatus;
  progress: number;
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
        const item: UploadItem = { key, file, head: null, preview: null, guess, draft, fromFile, errors: {}, status: "reading", progress: 0 };
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
        if (!it.head || !it.preview) continue;
        const noRateInFile = needsRate(it.preview) || (it.preview.ok && !it.preview.rateFromFile);
        if (!noRateInFile) continue;
        const rate = statedRate(it.draft);
        const prev = it.preview.ok ? it.preview.trace.sampleRateHz : undefined;
        if (!rate || rate === prev) continue;
        const preview = previewText(it.head, it.file.size, rate);
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

  const start = useCallback(
    async (key: string) => {
      const it = itemsRef.current.find((x) => x.key === key);
      if (!it || it.status === "uploading" || it.status === "done" || it.status === "reading") return;
      if (previewBlocks(it.preview, !!it.head?.partial)) return;
      const checked = toCaptureSettings(it.draft, needsRate(it.preview));
      if (!checked.ok) {
        patch(key, { errors: checked.errors, status: it.status === "error" ? "error" : "ready" });
        return;
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
      const abort = new AbortController();
      aborts.current.set(key, abort);
      patch(key, { status: "uploading", progress: 0, serverError: undefined, errors: {} });
      try {
        const result = await uploadTrace(caseId, it.file, checked.settings, (f) => patch(key, { progress: f }), abort.signal);
        patch(key, { status: "done", progress: 1, result });
        optsRef.current.onUploaded?.(result);
      } catch (e) {
        if (e instanceof ApiError && e.code === "aborted") {
          patch(key, { status: "cancelled", progress: 0 });
        } else if (e instanceof ApiError) {
          const errors: SettingsErrors = {};
          for (const f of e.details?.fields ?? []) {
            const name = String(f.path).replace(/^settings\./, "").split(".")[0] as keyof SettingsErrors;
            if (name) errors[name] = f.message;
          }
          patch(key, { status: "error", serverError: serverMessage(e), errors });
        } else {
          patch(key, { status: "error", serverError: "The upload failed. Try again." });
        }
      } finally {
        aborts.current.delete(key);
      }
    },
    [patch],
  );

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

  const cancel = useCallback((key: string) => aborts.current.get(key)?.abort(), []);
  const remove = useCallback((key: string) => {
    aborts.current.get(key)?.abort();
    setItems((xs) => xs.filter((x) => x.key !== key));
  }, []);
  const startAll = useCallback(async () => {
    for (const it of itemsRef.current) {
      if (it.status === "ready" || it.status === "cancelled" || it.status === "error") await start(it.key);
    }
  }, [start]);

  // Abandoning the page aborts what is still in flight.
  useEffect(() => {
    const m = aborts.current;
    return () => m.forEach((a) => a.abort());
  }, []);

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
function serverMessage(e: ApiError): string {
  const line = typeof e.details?.line === "number" ? e.details.line : null;
  let msg = e.message.charAt(0).toUpperCase() + e.message.slice(1);
  if (line !== null && !/line\s+\d+/i.test(msg)) msg = `Line ${line}: ${msg}`;
  if (e.status === 413) return `Too large: ${msg}`;
  if (e.status === 415) return `Not a trace file: ${msg}`;
  if (e.status === 0) return msg;
  return msg;
}
