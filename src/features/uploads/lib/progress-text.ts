/**
 * Upload progress in words a tech can read at a glance, for the uploader's own card (the
 * browser's view, lib/capture-upload.ts) and for everyone else in the case room (the server's
 * view, `upload:progress`).
 */
import type { UploadProgressPayload } from "../../../../shared/realtime";
import type { UploadState } from "./capture-upload";
import { formatSize } from "./size";

export function formatRate(bytesPerS: number | null): string | null {
  if (!bytesPerS || !(bytesPerS > 0)) return null;
  return bytesPerS >= 1024 * 1024
    ? `${(bytesPerS / 1024 / 1024).toFixed(1)} MB/s`
    : `${Math.max(1, Math.round(bytesPerS / 1024))} KB/s`;
}

export function formatEta(s: number | null): string | null {
  if (s == null || !Number.isFinite(s)) return null;
  if (s < 1.5) return "about a second left";
  if (s < 90) return `about ${Math.round(s)} s left`;
  if (s < 5400) return `about ${Math.round(s / 60)} min left`;
  return `about ${Math.round(s / 3600)} h left`;
}

export function ordinal(n: number): string {
  const s =
    n % 100 >= 11 && n % 100 <= 13 ? "th" : (({ 1: "st", 2: "nd", 3: "rd" } as Record<number, string>)[n % 10] ?? "th");
  return `${n}${s}`;
}

function serverStage(
  stage: string | undefined,
  queuePosition: number | null | undefined,
  fraction: number | null | undefined,
): string {
  if (stage === "queued") return `All sent. Waiting for the server (${ordinal(queuePosition ?? 1)} in line)…`;
  if (stage === "checking") {
    return `Checking the file${fraction != null ? ` — ${Math.round(fraction * 100)} %` : ""}…`;
  }
  if (stage === "measuring") return "Measuring the waveform…";
  if (stage === "stored") return "Stored.";
  return "All sent. The server is reading it…";
}

/** The uploader's own card: what is happening now, and the numbers behind it. */
export function localProgressText(u: UploadState): string {
  const compressing =
    !u.compressionDone && u.fileBytes > 0
      ? `compressing ${Math.round((u.compressedRead / u.fileBytes) * 100)} %`
      : null;
  switch (u.phase) {
    case "compressing":
      return `Compressing… ${compressing ? compressing.replace("compressing ", "") : ""}`.trim();
    case "sending": {
      const total = u.compressionDone
        ? u.compressedBytes
        : u.compressedRead
          ? (u.compressedBytes / u.compressedRead) * u.fileBytes
          : null;
      const of = total ? ` of ${u.compressionDone ? "" : "about "}${formatSize(Math.round(total))}` : "";
      const parts = [
        `Sending ${formatSize(u.sentBytes)}${of}`,
        formatRate(u.rateBytesPerS),
        formatEta(u.etaS),
        compressing,
      ].filter(Boolean);
      return parts.join(" · ");
    }
    case "offline":
      return `No connection. The upload waits and goes on from ${formatSize(u.sentBytes)} when the link returns.`;
    case "interrupted":
    case "resuming":
      return u.sentBytes > 0
        ? `The link dropped. Resuming from what the server has (${formatSize(u.resumedFrom ?? u.sentBytes)} sent)…`
        : "Resuming…";
    case "server":
      return serverStage(u.server?.stage, u.server?.queuePosition, u.server?.fraction);
    case "done":
      return "Stored.";
    case "cancelled":
      return "Cancelled.";
    case "error":
      return u.error?.message ?? "The upload failed.";
  }
}

/** Someone else's upload, as the server sees it (the expert's screen, the tech's other devices). */
export function roomProgressText(p: UploadProgressPayload): string {
  switch (p.stage) {
    case "sending": {
      const of = p.totalBytes ? ` of ${formatSize(p.totalBytes)}` : "";
      const still = p.totalBytes == null && p.compressed ? "still compressing" : null;
      return [`Arriving: ${formatSize(p.receivedBytes)}${of}`, formatRate(p.rateBytesPerS), formatEta(p.etaS), still]
        .filter(Boolean)
        .join(" · ");
    }
    case "interrupted":
      return `The sender's link dropped at ${formatSize(p.receivedBytes)}; waiting for it to come back.`;
    case "resuming":
      return `Resuming from ${formatSize(p.receivedBytes)}…`;
    case "refused":
      return `Refused: ${p.error?.message ?? "the server could not read it."}`;
    case "cancelled":
      return "Cancelled by the sender.";
    default:
      return serverStage(p.stage, p.queuePosition, p.fraction);
  }
}
