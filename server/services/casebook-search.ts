/**
 * Casebook search from the server's side: hands each search to a worker thread that has its own
 * read-only connection to the same SQLite file (WAL lets it read while the server writes), so
 * ranking and counting never run on the event loop that serves other requests. One worker per
 * database file, started on first use (or warmed shortly after the server starts), stopped after ten
 * minutes without searches; it never keeps the process alive. An in-memory database (no file to share) is searched in-thread instead.
 */
import path from "node:path";
import { Worker } from "node:worker_threads";
import type { AppContext } from "../context";
import { isServerUrl, type Db } from "../db/client";
import { CasebookSearchEngine, type CasebookSearchQuery, type CasebookSearchResult, type EngineStats } from "./casebook-search-engine";

/** a worker idle this long is stopped (its arrays are rebuilt on the next search) */
const IDLE_MS = 10 * 60_000;
const TIMEOUT_MS = 30_000;

type Pending = { resolve: (r: unknown) => void; reject: (e: Error) => void; timer: NodeJS.Timeout };

class SearchWorker {
  private worker: Worker | null = null;
  private seq = 0;
  private pending = new Map<number, Pending>();
  private idle: NodeJS.Timeout | null = null;

  constructor(private readonly target: SearchTarget) {}

  private start(): Worker {
    if (this.worker) return this.worker;
    const w = new Worker(new URL("./casebook-search-boot.mjs", import.meta.url), {
      workerData: { ...this.target, entry: new URL("./casebook-search-worker.ts", import.meta.url).href },
    });
    w.unref();
    w.on("message", (m: { id: number; ok: boolean; result?: unknown; error?: string }) => {
      const p = this.pending.get(m.id);
      if (!p) return;
      this.pending.delete(m.id);
      clearTimeout(p.timer);
      if (m.ok) p.resolve(m.result);
      else p.reject(new Error(m.error ?? "casebook search failed"));
      this.armIdle();
    });
    const fail = (err: Error) => {
      if (this.worker === w) this.worker = null;
      for (const [id, p] of this.pending) {
        clearTimeout(p.timer);
        p.reject(err);
        this.pending.delete(id);
      }
    };
    w.on("error", fail);
    w.on("exit", () => fail(new Error("the casebook search worker stopped")));
    this.worker = w;
    return w;
  }

  private armIdle(): void {
    if (this.idle) clearTimeout(this.idle);
    if (this.pending.size > 0) return;
    this.idle = setTimeout(() => void this.stop(), IDLE_MS);
    this.idle.unref();
  }

  request<T>(type: "search" | "warm" | "stats", query?: CasebookSearchQuery): Promise<T> {
    const w = this.start();
    if (this.idle) clearTimeout(this.idle);
    const id = ++this.seq;
    return new Promise<T>((resolve, reject) => {
      const timer = setTimeout(() => {
        this.pending.delete(id);
        reject(new Error("the casebook search took too long"));
      }, TIMEOUT_MS);
      timer.unref();
      this.pending.set(id, { resolve: resolve as (r: unknown) => void, reject, timer });
      w.postMessage({ id, type, query });
    });
  }

  async stop(): Promise<void> {
    const w = this.worker;
    this.worker = null;
    if (w) await w.terminate();
  }
}

const workers = new Map<string, SearchWorker>();
const inThread = new WeakMap<Db, CasebookSearchEngine>();

/** What a search worker reads: a database file, or a libSQL server (several nodes). */
export type SearchTarget = { file: string } | { url: string; authToken?: string };

function searchTarget(ctx: AppContext): SearchTarget | null {
  if (isServerUrl(ctx.env.DATABASE_URL)) return { url: ctx.env.DATABASE_URL, authToken: ctx.env.DATABASE_AUTH_TOKEN };
  const f = ctx.env.DATABASE_URL.replace(/^file:/, "");
  return f === ":memory:" || f === "" ? null : { file: path.resolve(f) };
}

const keyOf = (t: SearchTarget) => ("file" in t ? t.file : t.url);

function workerFor(ctx: AppContext): SearchWorker | null {
  const target = searchTarget(ctx);
  if (!target) return null;
  let w = workers.get(keyOf(target));
  if (!w) {
    w = new SearchWorker(target);
    workers.set(keyOf(target), w);
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
  const w = workers.get(keyOf(target));
  workers.delete(keyOf(target));
  await w?.stop();
}
