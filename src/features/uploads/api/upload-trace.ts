import type { CaptureSettings } from "../../../../shared/schemas/capture-settings";
import { upload } from "../../../lib/api-client";

/** POST /api/cases/:id/traces: multipart fields `file` and `settings` (JSON). */
export const tracePaths = {
  upload: (caseId: string) => `/api/cases/${encodeURIComponent(caseId)}/traces`,
};

/** The server's answer (201). */
export interface UploadedTrace {
  id: string;
  name?: string;
  samples: number;
  sampleRateHz: number;
  durationS: number;
  channels: { name: string; unit: string | null; min: number; max: number }[];
  analysis?: { findings?: { severity: string }[] } | null;
}

export function uploadTrace(
  caseId: string,
  file: File,
  settings: CaptureSettings,
  onProgress?: (fraction: number) => void,
  signal?: AbortSignal,
): Promise<UploadedTrace> {
  const form = new FormData();
  // settings first, so a streaming server has them before the file's bytes arrive
  form.append("settings", JSON.stringify(settings));
  form.append("file", file, file.name);
  return upload<UploadedTrace>(tracePaths.upload(caseId), form, onProgress, signal);
}
