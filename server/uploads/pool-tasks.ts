/**
 * The tasks of the upload pool's threads (loaded through pool-entry.mjs). Each takes a plain,
 * cloneable job and returns a plain result; nothing here touches the database.
 */
import { threadId } from "node:worker_threads";
import { readChannels } from "../traces/store";
import { analyzeTrace } from "../../shared/analysis/analyze";
import type { CaptureSettings } from "../../shared/schemas/capture-settings";
import { followCapture, ingestCapture, type FollowJob, type IngestJob, type IngestResult } from "./ingest";

/** A received capture: check, parse, store the channels and measure (server/uploads/ingest.ts). */
export async function ingest(job: IngestJob): Promise<IngestResult> {
  try {
    return await ingestCapture(job);
  } finally {
    job.progress?.close();
  }
}

/** A resumable upload read while it arrives (server/uploads/ingest.ts followCapture). */
export async function follow(job: FollowJob): Promise<IngestResult> {
  try {
    return await followCapture(job);
  } finally {
    job.progress?.close();
  }
}

/** Measures a trace already stored (shared/analysis on the channel file). */
export async function analyze(job: {
  dataFile: string;
  settings: Partial<CaptureSettings>;
}): Promise<Record<string, unknown>> {
  const trace = await readChannels(job.dataFile);
  return analyzeTrace(trace, job.settings) as unknown as Record<string, unknown>;
}

/** Starts a thread ahead of the first capture; answers the thread's id (the main thread's is 0). */
export async function ping(): Promise<number> {
  return threadId;
}
