/**
 * The casebook search worker thread: its own read-only connection to the database file and one
 * CasebookSearchEngine, answering one search at a time. Started by casebook-search.ts.
 */
import { parentPort, workerData } from "node:worker_threads";
import Database from "better-sqlite3";
import { CasebookSearchEngine, type CasebookSearchQuery } from "./casebook-search-engine";

const { file } = workerData as { file: string; entry: string };
const db = new Database(file, { readonly: true, fileMustExist: true });
db.pragma("busy_timeout = 5000");
const engine = new CasebookSearchEngine(db);

parentPort!.on("message", (m: { id: number; type: "search" | "warm" | "stats"; query?: CasebookSearchQuery }) => {
  try {
    if (m.type === "warm") {
      engine.refresh();
      parentPort!.postMessage({ id: m.id, ok: true, result: engine.stats() });
    } else if (m.type === "stats") {
      parentPort!.postMessage({ id: m.id, ok: true, result: engine.stats() });
    } else {
      parentPort!.postMessage({ id: m.id, ok: true, result: engine.search(m.query ?? {}) });
    }
  } catch (err) {
    parentPort!.postMessage({ id: m.id, ok: false, error: err instanceof Error ? err.message : String(err) });
  }
});
