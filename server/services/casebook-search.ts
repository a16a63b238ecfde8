/**
 * Casebook search from the server's side: hands each search to a piscina pool of one thread per
 * database file, which has its own read-only connection to the same SQLite file (WAL lets it read
 * while the server writes), so ranking and counting never run on the event loop that serves other
 * requests (on several nodes, its own client of the libSQL server). The thread starts on first use (or is warmed shortly after the server starts), stops
 * after ten minutes without searches, and never keeps the process alive. Searches wait their turn
 * in piscina's queue. An in-memory database (no file to share) is searched in-thread instead.
 * Its own pool rather than the upload pool's threads: a search answers in milliseconds and must
 * not wait behind captures being parsed.
 */
import path from "node:path";
import { fileURLToPath } from "node:url";
import { Piscina } from "piscina";
import type { AppContext } from "../context";
import { isServerUrl, type Db } from "../db/client";
import {
  CasebookSearchEngine,
  type CasebookSearchQuery,
  type CasebookSearchResult,
  type EngineStats,
} from "./casebook-search-engine";
import { targetKey, type SearchTarget } from "./casebook-search-worker";

/** a thread idle this long is stopped (its arrays are rebuilt on the next search) */
const IDLE_MS = 10 * 60_000;
const TIMEOUT_MS = 30_000;

class SearchWorker {
  private readonly pool: Piscina;

  constructor(private readonly target: SearchTarget) {
    this.pool = new Piscina({
      filename: fileURLToPath(new URL("./casebook-search-boot.mjs", import.meta.url)),
      minThreads: 0,
      maxThreads: 1,
      idleTimeout: IDLE_MS,
    });
    this.pool.on("error", () => {});
  }

  async request<T>(type: "search" | "warm" | "stats", query?: CasebookSearchQuery): Promise<T> {
    try {
      return (await this.pool.run(
        { target: this.target, query },
        { name: type, signal: AbortSignal.timeout(TIMEOUT_MS) },
      )) as T;
    } catch (err) {
      if ((err as Error)?.name === "AbortError" || (err as Error)?.name === "TimeoutError")
        throw new Error("the casebook search took too long", { cause: err });
      throw err;
    }
  }

  async stop(): Promise<void> {
    await this.pool.destroy();
  }
}

const workers = new Map<string, SearchWorker>();
const inThread = new WeakMap<Db, CasebookSearchEngine>();

/** What a search thread reads: the database file, or the libSQL server (several nodes). */
function searchTarget(ctx: AppContext): SearchTarget | null {
  if (isServerUrl(ctx.env.DATABASE_URL)) return { url: ctx.env.DATABASE_URL, authToken: ctx.env.DATABASE_AUTH_TOKEN };
  const f = ctx.env.DATABASE_URL.replace(/^file:/, "");
  return f === ":memory:" || f === "" ? null : { file: path.resolve(f) };
}

function workerFor(ctx: AppContext): SearchWorker | null {
  const target = searchTarget(ctx);
  if (!target) return null;
  let w = workers.get(targetKey(target));
  if (!w) {
    w = new SearchWorker(target);
    workers.set(targetKey(target), w);
  }
  return w;
}

/** The engine on the server's own connection (in-memory databases; also used by tests and the bench). */
export function inThreadEngine(db: Db): CasebookSearchEngine {
  let e = inThread.get(db);
  if (!e) {
    if (!db.sqlite) throw new Error("an in-thread casebook search needs the embedded database");
    e = new CasebookSearchEngine(db.sqlite);
    inThread.set(db, e);
  }
  return e;
}

/** Runs one casebook search (in the worker thread when there is a database file). */
export async function searchCasebook(ctx: AppContext, query: CasebookSearchQuery): Promise<CasebookSearchResult> {
  const w = workerFor(ctx);
  if (!w) return inThreadEngine(ctx.db).search(query);
  return w.request<CasebookSearchResult>("search", query);
}

/** Loads the worker's arrays ahead of the first search (e.g. after a bulk import). */
export async function warmCasebookSearch(ctx: AppContext): Promise<EngineStats> {
  const w = workerFor(ctx);
  if (!w) {
    const e = inThreadEngine(ctx.db);
    await e.refresh();
    return e.stats();
  }
  return w.request<EngineStats>("warm");
}

/** Stops the search worker of this database (tests, shutdown). */
export async function stopCasebookSearch(ctx: AppContext): Promise<void> {
  const target = searchTarget(ctx);
  if (!target) return;
  const w = workers.get(targetKey(target));
  workers.delete(targetKey(target));
  await w?.stop();
}
