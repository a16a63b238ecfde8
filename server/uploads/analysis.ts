import { Worker } from "node:worker_threads";
import type { CaptureSettings } from "../../shared/schemas/capture-settings";

/**
 * Runs shared/analysis on a stored trace in a worker thread (one long-lived worker, jobs in turn).
 * Measuring a 5-million-sample capture takes seconds of CPU; on the main thread that would stall
 * every other request, so uploads hand it to the worker and wait for the answer.
 */
type Pending = { resolve: (r: Record<string, unknown>) => void; reject: (e: Error) => void; timer: NodeJS.Timeout };

let worker: Worker | null = null;
let seq = 0;
const pending = new Map<number, Pending>();

function failAll(err: Error) {
  for (const [id, p] of pending) {
    clearTimeout(p.timer);
    p.reject(err);
    pending.delete(id);
  }
}

function getWorker(): Worker {
  if (worker) return worker;
  const w = new Worker(new URL("./analysis-boot.mjs", import.meta.url), {
    workerData: { entry: new URL("./analysis-worker.ts", import.meta.url).href },
  });
  w.unref(); // never keeps a process alive on its own
  w.on("message", (m: { id: number; ok: boolean; result?: Record<string, unknown>; error?: string }) => {
    const p = pending.get(m.id);
    if (!p) return;
    pending.delete(m.id);
    clearTimeout(p.timer);
    if (m.ok) p.resolve(m.result!);
    else p.reject(new Error(m.error ?? "analysis failed"));
  });
  w.on("error", (err) => {
    if (worker === w) worker = null;
    failAll(err);
  });
  w.on("exit", () => {
    if (worker === w) worker = null;
    failAll(new Error("the analysis worker stopped"));
  });
  worker = w;
  return w;
}

/** Analyses the trace data file at `dataFile`; rejects on failure or after `timeoutMs`. */
export function analyzeStoredTrace(dataFile: string, settings: Partial<CaptureSettings>, opts: { timeoutMs?: number } = {}): Promise<Record<string, unknown>> {
  const w = getWorker();
  const id = ++seq;
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => {
      pending.delete(id);
      reject(new Error("the analysis took too long"));
      // a stuck analysis would hold up every later one: start afresh
      if (worker === w) {
        worker = null;
        void w.terminate();
      }
    }, opts.timeoutMs ?? 120_000);
    timer.unref();
    pending.set(id, { resolve, reject, timer });
    w.postMessage({ id, dataFile, settings });
  });
}

/** Stops the worker (tests, shutdown). Pending analyses reject. */
export async function stopAnalysisWorker(): Promise<void> {
  const w = worker;
  worker = null;
  if (w) await w.terminate();
}
