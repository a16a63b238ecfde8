/**
 * The browser sends captures as resumable uploads (lib/capture-upload.ts); the multipart endpoint
 * (POST /api/cases/:id/traces) stays for API clients.
 */

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
