import { useRef, useState } from "react";
import { useDropzone, type FileRejection } from "react-dropzone";
import { ApiError } from "../../../lib/api-client";
import { useUploadPhoto } from "../api/upload-photo";
import type { CasePhoto } from "../api/types";
import { formatBytes } from "../lib/labels";
import { buttonClass } from "./ui";

const MAX_PHOTO_BYTES = 15 * 1024 * 1024;

interface Item {
  key: string;
  file: File;
  progress: number;
  state: "uploading" | "done" | "error";
  error?: string;
  abort: AbortController;
}

/**
 * Photos of the vehicle, the engine bay, the scope screen: JPEG, PNG or WebP up to 15 MB each.
 * The server checks the file's content, so a renamed file is refused there with its reason.
 */
export function PhotoUploader({
  caseId,
  ensureCaseId,
  photos,
  photoUrl,
  onDelete,
  disabled,
}: {
  caseId: string | null;
  /** saves the draft first when the case does not exist yet; resolves with its id */
  ensureCaseId: () => Promise<string>;
  photos: CasePhoto[];
  photoUrl?: (p: CasePhoto) => string | undefined;
  /** shown as a remove button on each photo when given (drafts) */
  onDelete?: (p: CasePhoto) => void;
  disabled?: boolean;
}) {
  const uploadPhoto = useUploadPhoto();
  const [items, setItems] = useState<Item[]>([]);
  const [refusals, setRefusals] = useState<string[]>([]);
  const seq = useRef(0);

  const patch = (key: string, p: Partial<Item>) =>
    setItems((xs) => xs.map((x) => (x.key === key ? { ...x, ...p } : x)));

  async function start(files: File[]) {
    if (!files.length) return;
    let id = caseId;
    try {
      id = id ?? (await ensureCaseId());
    } catch (e) {
      setRefusals([e instanceof Error ? e.message : "Save the draft first."]);
      return;
    }
    for (const file of files) {
      const key = `p${++seq.current}`;
      const abort = new AbortController();
      setItems((xs) => [...xs, { key, file, progress: 0, state: "uploading", abort }]);
      uploadPhoto(id, file, (f) => patch(key, { progress: f }), abort.signal).then(
        () => {
          patch(key, { state: "done", progress: 1 });
          setTimeout(() => setItems((xs) => xs.filter((x) => x.key !== key)), 1500);
        },
        (e) => patch(key, { state: "error", error: e instanceof ApiError ? e.message : "Upload failed." }),
      );
    }
  }

  function onDrop(accepted: File[], rejected: FileRejection[]) {
    setRefusals(
      rejected.map(({ file, errors }) => {
        const why = errors.map((e) =>
          e.code === "file-too-large"
            ? `larger than 15 MB (${formatBytes(file.size)})`
            : e.code === "file-invalid-type"
              ? "not a JPEG, PNG or WebP picture"
              : e.message,
        );
        return `${file.name}: ${why.join("; ")}`;
      }),
    );
    void start(accepted);
  }

  const { getRootProps, getInputProps, isDragActive } = useDropzone({
    onDrop,
    accept: { "image/jpeg": [".jpg", ".jpeg"], "image/png": [".png"], "image/webp": [".webp"] },
    maxSize: MAX_PHOTO_BYTES,
    multiple: true,
    disabled,
  });

  return (
    <div className="space-y-3">
      {photos.length ? (
        <ul className="grid grid-cols-2 gap-3 sm:grid-cols-3 lg:grid-cols-4" aria-label="Photos on this case">
          {photos.map((p) => {
            const url = photoUrl?.(p) ?? p.url;
            return (
              <li key={p.id} className="relative overflow-hidden rounded-lg border border-ink-200 bg-ink-50">
                {url ? (
                  <a href={url} target="_blank" rel="noreferrer">
                    <img src={url} alt={p.name} loading="lazy" className="aspect-[4/3] w-full object-cover" />
                  </a>
                ) : (
                  <div className="flex aspect-[4/3] items-center justify-center text-sm text-ink-500">Photo</div>
                )}
                <p className="truncate px-2 py-1 text-xs text-ink-600" title={p.name}>
                  {p.name}
                </p>
                {onDelete ? (
                  <button
                    type="button"
                    onClick={() => onDelete(p)}
                    className="absolute right-1 top-1 flex h-10 w-10 items-center justify-center rounded-full bg-ink-900/75 text-xl leading-none text-white hover:bg-ink-900"
                    aria-label={`Remove photo ${p.name}`}
                  >
                    ×
                  </button>
                ) : null}
              </li>
            );
          })}
        </ul>
      ) : null}

      {!disabled ? (
        <div
          {...getRootProps({
            className: `flex min-h-24 cursor-pointer flex-col items-center justify-center rounded-xl border-2 border-dashed px-4 py-5 text-center ${
              isDragActive ? "border-kiln-500 bg-kiln-50" : "border-ink-300 bg-ink-50 hover:border-kiln-400"
            } ${disabled ? "pointer-events-none opacity-50" : ""}`,
            "aria-label": "Add photos: JPEG, PNG or WebP, up to 15 MB each",
          })}
        >
          <input {...getInputProps()} />
          <p className="font-semibold text-ink-800">{isDragActive ? "Drop the photos here" : "Add photos"}</p>
          <p className="text-sm text-ink-500">
            Tap to choose or take a picture, or drop files. JPEG, PNG or WebP, up to 15 MB.
          </p>
        </div>
      ) : null}

      {refusals.length ? (
        <ul role="alert" className="space-y-1 text-sm font-semibold text-alarm-600">
          {refusals.map((r) => (
            <li key={r}>{r}</li>
          ))}
        </ul>
      ) : null}

      <PhotoUploadList items={items} onDismiss={(key) => setItems((xs) => xs.filter((x) => x.key !== key))} />
    </div>
  );
}

/** The photos being sent: each with its progress and a cancel, or its refusal and a dismiss. */
function PhotoUploadList({ items, onDismiss }: { items: Item[]; onDismiss: (key: string) => void }) {
  if (!items.length) return null;
  return (
    <ul className="space-y-2" aria-label="Photo uploads">
      {items.map((it) => (
        <li key={it.key} className="rounded-lg border border-ink-200 bg-white px-3 py-2 text-sm">
          <div className="flex items-center gap-2">
            <span className="min-w-0 flex-1 truncate font-semibold">{it.file.name}</span>
            <span className="text-ink-500">{formatBytes(it.file.size)}</span>
            {it.state === "uploading" ? (
              <button type="button" className={buttonClass.quiet} onClick={() => it.abort.abort()}>
                Cancel
              </button>
            ) : it.state === "error" ? (
              <button type="button" className={buttonClass.quiet} onClick={() => onDismiss(it.key)}>
                Dismiss
              </button>
            ) : null}
          </div>
          {it.state === "error" ? (
            <p role="alert" className="font-semibold text-alarm-600">
              {it.error}
            </p>
          ) : (
            <progress
              className="mt-1 h-2 w-full accent-kiln-500"
              max={1}
              value={it.progress}
              aria-label={`Uploading ${it.file.name}`}
            />
          )}
          {it.state === "done" ? <p className="text-verdigris-600">Uploaded.</p> : null}
        </li>
      ))}
    </ul>
  );
}
