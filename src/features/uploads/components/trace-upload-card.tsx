import { useState } from "react";
import { formatSize } from "../lib/size";
import { count, si } from "../lib/format";
import { needsRate, previewBlocks, type UploadItem } from "../hooks/use-trace-uploads";
import type { SettingsDraft } from "../lib/settings";
import { kindLabels } from "../lib/settings";
import { CaptureSettingsForm } from "./capture-settings-form";
import { localProgressText } from "../lib/progress-text";
import { TracePreviewPanel } from "./trace-preview";
import { channelUnits } from "../../../../shared/trace/units";

const btn = {
  primary:
    "inline-flex min-h-11 items-center justify-center gap-2 rounded-lg bg-kiln-500 px-4 py-2 font-semibold text-ink-950 shadow-sm hover:bg-kiln-400 disabled:cursor-not-allowed disabled:opacity-50",
  secondary:
    "inline-flex min-h-11 items-center justify-center gap-2 rounded-lg border border-ink-300 bg-white px-4 py-2 font-semibold text-ink-800 hover:bg-ink-50 disabled:cursor-not-allowed disabled:opacity-50",
};

const statusText: Record<UploadItem["status"], string> = {
  reading: "Reading…",
  ready: "Ready to upload",
  waiting: "Waiting its turn",
  uploading: "Uploading",
  done: "Uploaded",
  error: "Not uploaded",
  cancelled: "Cancelled",
};

export function TraceUploadCard({
  item,
  onDraft,
  onStart,
  onCancel,
  onRemove,
  copySource,
}: {
  item: UploadItem;
  /** another file whose settings can be taken over with one tap */
  copySource?: { name: string; onCopy: () => void };
  onDraft: (d: SettingsDraft) => void;
  onStart: () => void;
  onCancel: () => void;
  onRemove: () => void;
}) {
  const [open, setOpen] = useState(true);
  const p = item.preview;
  const busy = item.status === "uploading" || item.status === "waiting";
  const blocked = previewBlocks(p, !!item.head?.partial);
  // the unit the scope's settings are typed in (shared/trace/units): V for a file in V or mV, kV or A when the file states them
  const unit = p?.ok ? channelUnits(p.trace.channels[0]?.unit ?? null).scopeUnit : "V";
  const titleId = `${item.key}-title`;

  if (item.status === "done") return <UploadedCard item={item} titleId={titleId} onRemove={onRemove} />;

  return (
    <li className="rounded-xl border border-ink-200 bg-white shadow-sm" aria-labelledby={titleId}>
      <div className="flex flex-wrap items-center gap-x-3 gap-y-1 border-b border-ink-100 px-4 py-3">
        <div className="min-w-0 flex-1">
          <p id={titleId} className="truncate font-semibold text-ink-900" title={item.fileName}>
            {item.fileName}
          </p>
          <p className="text-sm text-ink-500">
            {formatSize(item.fileBytes)} · {kindLabels[item.draft.kind]} ·{" "}
            <span className={item.status === "error" || blocked ? "font-semibold text-alarm-600" : ""}>
              {blocked ? "Cannot be read" : statusText[item.status]}
            </span>
          </p>
        </div>
        {!busy ? (
          <button
            type="button"
            onClick={onRemove}
            className="flex h-11 w-11 items-center justify-center rounded-lg text-2xl leading-none text-ink-500 hover:bg-ink-100 hover:text-ink-900"
            aria-label={`Remove ${item.fileName}`}
          >
            ×
          </button>
        ) : null}
      </div>

      <div className="space-y-4 px-4 py-4">
        {item.status === "reading" ? <p className="text-sm text-ink-500">Reading the start of the file…</p> : null}
        {p ? <TracePreviewPanel preview={p} fileName={item.fileName} /> : null}

        {p && !blocked ? (
          <div>
            <button
              type="button"
              className="mb-3 flex min-h-11 items-center gap-2 font-semibold text-ink-800"
              aria-expanded={open}
              aria-controls={`${item.key}-settings`}
              onClick={() => setOpen((o) => !o)}
            >
              <span aria-hidden="true" className={`inline-block transition-transform ${open ? "rotate-90" : ""}`}>
                ▸
              </span>
              Capture settings
              {Object.keys(item.errors).length ? (
                <span className="text-sm text-alarm-600">— {Object.keys(item.errors).length} to fix</span>
              ) : null}
            </button>
            <div id={`${item.key}-settings`} hidden={!open}>
              {copySource && !busy ? (
                <button
                  type="button"
                  className="mb-3 min-h-11 rounded-lg border border-ink-300 bg-white px-3 text-sm font-semibold text-ink-800 hover:bg-ink-50"
                  onClick={copySource.onCopy}
                >
                  Same settings as {copySource.name}
                </button>
              ) : null}
              <CaptureSettingsForm
                idPrefix={item.key}
                draft={item.draft}
                onChange={onDraft}
                errors={item.errors}
                needsRate={needsRate(p)}
                rateFromFile={!!(p.ok && p.rateFromFile && !p.noTimeColumn)}
                channelNames={p.ok ? p.trace.channels.map((c) => c.name) : []}
                unit={unit}
                guess={item.guess}
                fromFile={item.fromFile}
                disabled={busy}
              />
            </div>
          </div>
        ) : null}

        {item.serverError ? (
          <p
            role="alert"
            className="rounded-lg border border-alarm-500 bg-white px-3 py-2 text-sm font-semibold text-alarm-600"
          >
            {item.serverError}
          </p>
        ) : null}
        {blocked ? (
          <p className="text-sm text-ink-600">
            Fix the export (or export again from the scope) and drop the file again.
          </p>
        ) : null}

        {item.restored && !busy && item.status !== "error" ? (
          <p className="text-sm text-ink-600">Continues where it stopped before the page was reloaded.</p>
        ) : null}
        {item.status === "waiting" ? (
          <p className="text-sm text-ink-600" aria-live="polite">
            Waiting its turn: captures go one after another.
          </p>
        ) : null}
        {item.status === "uploading" ? <UploadProgress item={item} /> : null}

        <div className="flex flex-wrap gap-2">
          {busy ? (
            <button type="button" className={btn.secondary} onClick={onCancel}>
              Cancel upload
            </button>
          ) : !blocked && item.status !== "reading" && (item.file || item.restored) ? (
            <button type="button" className={btn.primary} onClick={onStart}>
              {item.status === "error" || item.status === "cancelled" ? "Try again" : "Upload trace"}
            </button>
          ) : null}
        </div>
      </div>
    </li>
  );
}

/** A trace that arrived: what the server read, and a dismiss. */
function UploadedCard({ item, titleId, onRemove }: { item: UploadItem; titleId: string; onRemove: () => void }) {
  const r = item.result;
  return (
    <li
      className="flex flex-wrap items-center gap-3 rounded-xl border border-verdigris-500 bg-white px-4 py-3"
      aria-labelledby={titleId}
    >
      <span
        aria-hidden="true"
        className="flex h-7 w-7 items-center justify-center rounded-full bg-verdigris-500 text-sm font-bold text-white"
      >
        ✓
      </span>
      <div className="min-w-0 flex-1">
        <p id={titleId} className="truncate font-semibold">
          {item.fileName}
        </p>
        <p className="text-sm text-ink-600">
          Uploaded{r ? ` — ${count(r.samples)} samples at ${si(r.sampleRateHz, "S/s")}, ${si(r.durationS, "s")}` : ""}.
          It is listed with the case's traces.
        </p>
      </div>
      <button type="button" className={btn.secondary} onClick={onRemove}>
        Dismiss
      </button>
    </li>
  );
}

/** The upload under way: its share sent (indeterminate while compressing or on the server) and its stage. */
function UploadProgress({ item }: { item: UploadItem }) {
  return (
    <div className="space-y-1">
      <progress
        className="h-3 w-full accent-kiln-500"
        max={1}
        value={item.upload?.phase === "server" || item.upload?.phase === "compressing" ? undefined : item.progress}
        aria-label={`Uploading ${item.fileName}`}
      />
      <p className="text-sm text-ink-600" aria-live="polite" data-testid="upload-progress">
        {item.upload ? localProgressText(item.upload) : "Starting…"}
      </p>
    </div>
  );
}
