/**
 * The casebook search pool's tasks (loaded through casebook-search-boot.mjs): each thread keeps its
 * own connection — read-only to the database file, or a client of the libSQL server — and one
 * CasebookSearchEngine per database, so the engine's arrays stay warm between searches. Started by
 * casebook-search.ts.
 */
import Database from "better-sqlite3";
import { createClient } from "@libsql/client/http";
import {
  CasebookSearchEngine,
  type CasebookSearchQuery,
  type CasebookSearchResult,
  type EngineStats,
} from "./casebook-search-engine";
import { libsqlEngineSource } from "./casebook-search-source";

/** What a search thread reads: a database file, or a libSQL server. */
export type SearchTarget = { file: string } | { url: string; authToken?: string };

export const targetKey = (t: SearchTarget) => ("file" in t ? t.file : t.url);

const engines = new Map<string, CasebookSearchEngine>();

function engineFor(target: SearchTarget): CasebookSearchEngine {
  let e = engines.get(targetKey(target));
  if (!e) {
    if ("file" in target) {
      const db = new Database(target.file, { readonly: true, fileMustExist: true });
      db.pragma("busy_timeout = 5000");
      e = new CasebookSearchEngine(db);
    } else {
      const client = createClient({ url: target.url, authToken: target.authToken || undefined });
      e = new CasebookSearchEngine(libsqlEngineSource(client));
    }
    engines.set(targetKey(target), e);
  }
  return e;
}

export function search(job: { target: SearchTarget; query?: CasebookSearchQuery }): Promise<CasebookSearchResult> {
  return engineFor(job.target).search(job.query ?? {});
}

/** Loads the engine's arrays ahead of the first search. */
export async function warm(job: { target: SearchTarget }): Promise<EngineStats> {
  const e = engineFor(job.target);
  await e.refresh();
  return e.stats();
}

export function stats(job: { target: SearchTarget }): EngineStats {
  return engineFor(job.target).stats();
}
