import { useState } from "react";
import { useDropzone, type FileRejection } from "react-dropzone";
import { MAX_TRACE_FILE_BYTES } from "../../../../shared/trace/parse";
import type { UploadedTrace } from "../api/upload-trace";
import { useTraceUploads } from "../hooks/use-trace-uploads";
import { formatSize } from "../lib/size";
import { TraceUploadCard } from "./trace-upload-card";

/**
 * Drop several CSV/TSV scope exports at once; each gets an instant preview and its own capture
 * settings, then uploads with progress. When there is no case yet, `ensureCaseId` saves the draft.
 */
export function TraceUploader({
  caseId,
  ensureCaseId,
  onUploaded,
}: {
  caseId: string | null;
  ensureCaseId?: () => Promise<string>;
  onUploaded?: (t: UploadedTrace) => void;
}) {
  const q = useTraceUploads({ caseId, ensureCaseId, onUploaded });
  const [refusals, setRefusals] = useState<string[]>([]);

  function onDrop(accepted: File[], rejected: FileRejection[]) {
    setRefusals(
      rejected.map(({ file, errors }) => {
        const why = errors.map((e) =>
          e.code === "file-too-large"
            ? `${formatSize(file.size)} is over the 200 MB limit`
            : e.code === "file-invalid-type"
              ? "not a CSV or TSV export (.csv, .tsv or .txt)"
              : e.message,
        );
        return `${file.name}: ${why.join("; ")}`;
      }),
    );
    q.add(accepted);
  }

  const { getRootProps, getInputProps, isDragActive } = useDropzone({
    onDrop,
    accept: {
      "text/csv": [".csv"],
      "text/tab-separated-values": [".tsv"],
      "text/plain": [".txt"],
      "application/vnd.ms-excel": [".csv"],
    },
    maxSize: MAX_TRACE_FILE_BYTES,
    multiple: true,
  });

  const waiting = q.items.filter((i) => i.status === "ready" || i.status === "cancelled").length;

  return (
    <div className="space-y-4">
      <div
        {...getRootProps({
          className: `flex min-h-32 cursor-pointer flex-col items-center justify-center rounded-xl border-2 border-dashed px-4 py-6 text-center ${
            isDragActive ? "border-kiln-500 bg-kiln-50" : "border-ink-300 bg-ink-50 hover:border-kiln-400"
          }`,
          "aria-label": "Add trace files: CSV or TSV scope exports, up to 200 MB each",
        })}
      >
        <input {...getInputProps()} />
        <svg aria-hidden="true" viewBox="0 0 48 24" className="mb-2 h-6 w-12 text-kiln-500">
          <path
            d="M2 16h10l3-13 3 17 3-6h7l3 3 3-3 3 2 3-1h4"
            fill="none"
            stroke="currentColor"
            strokeWidth="2"
            strokeLinejoin="round"
            strokeLinecap="round"
          />
        </svg>
        <p className="font-semibold text-ink-800">{isDragActive ? "Drop the traces here" : "Add traces"}</p>
        <p className="text-sm text-ink-500">
          Tap to choose, or drop several CSV / TSV exports at once (up to 200 MB each). One file per cylinder or coil
          compares best.
        </p>
      </div>

      {refusals.length ? (
        <ul role="alert" className="space-y-1 text-sm font-semibold text-alarm-600">
          {refusals.map((r) => (
            <li key={r}>{r}</li>
          ))}
        </ul>
      ) : null}

      {q.items.length ? (
        <ul className="space-y-4" aria-label="Traces to upload">
          {q.items.map((it, i) => {
            const source = q.items
              .slice(0, i)
              .find(
                (x) =>
                  x.preview?.ok &&
                  (x.status === "ready" || x.status === "uploading" || x.status === "done" || x.status === "cancelled"),
              );
            return (
              <TraceUploadCard
                key={it.key}
                item={it}
                copySource={
                  source ? { name: source.fileName, onCopy: () => q.copyFrom(source.key, it.key) } : undefined
                }
                onDraft={(d) => q.setDraft(it.key, d)}
                onStart={() => void q.start(it.key)}
                onCancel={() => q.cancel(it.key)}
                onRemove={() => q.remove(it.key)}
              />
            );
          })}
        </ul>
      ) : null}

      {waiting > 1 ? (
        <button
          type="button"
          className="inline-flex min-h-11 items-center justify-center rounded-lg bg-ink-800 px-4 py-2 font-semibold text-white hover:bg-ink-700"
          onClick={() => void q.startAll()}
        >
          Upload all {waiting} traces
        </button>
      ) : null}
    </div>
  );
}
