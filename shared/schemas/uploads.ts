/**
 * Resumable capture uploads (tus 1.0.0 at /api/uploads): the Upload-Metadata a client sends when
 * it creates one. Values arrive base64-encoded UTF-8 (tus protocol, Upload-Metadata), so a file
 * name keeps every character the tech gave it.
 */
import { z } from "zod";
import type { UploadStage } from "../realtime";
import { settingsFieldSchema } from "./traces";

/** Where uploads are created (POST) and continued (HEAD, PATCH, DELETE on `<path>/<id>`). */
export const RESUMABLE_UPLOAD_PATH = "/api/uploads";

/** How the upload's bytes are encoded: gzip (the browser compresses) or as the file is. */
export const uploadEncodings = ["gzip", "identity"] as const;
export type UploadEncoding = (typeof uploadEncodings)[number];

export const uploadMetadataSchema = z.object({
  caseId: z.string({ error: "Name the case (caseId)." }).trim().min(1, { error: "Name the case (caseId)." }).max(64),
  /** the file's name on the tech's device */
  filename: z
    .string({ error: "Give the file's name (filename)." })
    .min(1, { error: "Give the file's name (filename)." })
    .max(255),
  settings: settingsFieldSchema,
  /** a name for the trace; defaults to the file's name */
  name: z.string().trim().max(120, { error: "The name is too long (at most 120 characters)." }).optional(),
  /** size of the file before compression, when known (refused at once when over the limit) */
  fileBytes: z.coerce.number().int().min(0).optional(),
  encoding: z.enum(uploadEncodings, { error: 'encoding is "gzip" or "identity".' }).optional(),
});
export type UploadMetadata = z.output<typeof uploadMetadataSchema>;

/** `GET /api/uploads/:id`: where a resumable upload stands. */
export interface UploadStatusResponse {
  id: string;
  caseId: string;
  stage: UploadStage;
  receivedBytes: number;
  totalBytes: number | null;
  queuePosition: number | null;
  fraction: number | null;
  traceId: string | null;
  error: { code: string; message: string } | null;
}
