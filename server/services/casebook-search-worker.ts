/**
 * The casebook search worker thread: one CasebookSearchEngine on its own connection — a read-only
 * connection to the database file, or a client of the libSQL server — answering one search at a
 * time. Started by casebook-search.ts.
 */
import { parentPort, workerData } from "node:worker_threads";
import Database from "better-sqlite3";
import { createClient } from "@libsql/client/http";
import { CasebookSearchEngine, type CasebookSearchQuery } from "./casebook-search-engine";
import { libsqlEngineSource } from "./casebook-search-source";

const target = workerData as { file: string } | { url: string; authToken?: string };
let engine: CasebookSearchEngine;
if ("file" in target) {
  const db = new Database(target.file, { readonly: true, fileMustExist: true });
  db.pragma("busy_timeout = 5000");
  engine = new CasebookSearchEngine(db);
} else {
  engine = new CasebookSearchEngine(libsqlEngineSource(createClient({ url: target.url, authToken: target.authToken || undefined })));
}

// one message at a time, in order
let queue: Promise<void> = Promise.resolve();
parentPort!.on("message", (m: { id: number; type: "search" | "warm" | "stats"; query?: CasebookSearchQuery }) => {
  queue = queue.then(async () => {
    try {
      if (m.type === "warm") await engine.refresh();
      const result = m.type === "search" ? await engine.search(m.query ?? {}) : engine.stats();
      parentPort!.postMessage({ id: m.id, ok: true, result });
    } catch (err) {
      parentPort!.postMessage({ id: m.id, ok: false, error: err instanceof Error ? err.message : String(err) });
    }
  });
});
