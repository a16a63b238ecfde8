/** One capture on the upload card: what the page knows about it, and the server's refusal in words. */
import type { UploadedTrace } from "../api/upload-trace";
import type { TracePreview } from "./preview";
import type { SettingsDraft, SettingsErrors } from "./settings";
import type { UploadState } from "./capture-upload";
import type { SavedUpload } from "./upload-store";

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

/** The server's refusal in plain words, with the line when it names one. */
export function serverMessage(e: {
  status: number;
  code: string;
  message: string;
  details?: Record<string, unknown>;
}): string {
  const line = typeof e.details?.line === "number" ? e.details.line : null;
  let msg = e.message.charAt(0).toUpperCase() + e.message.slice(1);
  if (line !== null && !/line\s+\d+/i.test(msg)) msg = `Line ${line}: ${msg}`;
  if (e.status === 413) return `Too large: ${msg}`;
  if (e.status === 415) return `Not a trace file: ${msg}`;
  if (e.status === 0) return msg;
  return msg;
}
