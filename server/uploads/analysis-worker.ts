/**
 * Worker thread: analyses a stored trace (server/traces/store.ts data file) with shared/analysis,
 * so that measuring millions of samples never blocks the server's event loop.
 * Messages in: { id, dataFile, settings }; out: { id, ok: true, result } | { id, ok: false, error }.
 */
import { parentPort } from "node:worker_threads";
import { readChannels } from "../traces/store";
import { analyzeTrace } from "../../shared/analysis/analyze";
import type { CaptureSettings } from "../../shared/schemas/capture-settings";

interface Job {
  id: number;
  dataFile: string;
  settings: Partial<CaptureSettings>;
}

parentPort!.on("message", async (job: Job) => {
  try {
    const trace = await readChannels(job.dataFile);
    const result = analyzeTrace(trace, job.settings);
    parentPort!.postMessage({ id: job.id, ok: true, result });
  } catch (err) {
    parentPort!.postMessage({ id: job.id, ok: false, error: err instanceof Error ? err.message : String(err) });
  }
});
