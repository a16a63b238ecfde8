/**
 * The casebook search pool's tasks (loaded through casebook-search-boot.mjs): each thread keeps
 * its own read-only connection to the database file and one CasebookSearchEngine per file, so the
 * engine's arrays stay warm between searches. Started by casebook-search.ts.
 */
import Database from "better-sqlite3";
import {
  CasebookSearchEngine,
  type CasebookSearchQuery,
  type CasebookSearchResult,
  type EngineStats,
} from "./casebook-search-engine";

const engines = new Map<string, CasebookSearchEngine>();

function engineFor(file: string): CasebookSearchEngine {
  let e = engines.get(file);
  if (!e) {
    const db = new Database(file, { readonly: true, fileMustExist: true });
    db.pragma("busy_timeout = 5000");
    e = new CasebookSearchEngine(db);
    engines.set(file, e);
  }
  return e;
}

export function search(job: { file: string; query?: CasebookSearchQuery }): CasebookSearchResult {
  return engineFor(job.file).search(job.query ?? {});
}

/** Loads the engine's arrays ahead of the first search. */
export function warm(job: { file: string }): EngineStats {
  const e = engineFor(job.file);
  e.refresh();
  return e.stats();
}

export function stats(job: { file: string }): EngineStats {
  return engineFor(job.file).stats();
}
