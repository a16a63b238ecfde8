/**
 * Where the casebook search engine (./casebook-search-engine.ts) reads: the FTS5 index and the
 * entries' facet columns, inside one read snapshot per search. Two sources give the same answers:
 *
 * - a SQLite file through better-sqlite3 (the embedded database; in the search worker thread, on
 *   its own read-only connection), where the ranking query is filtered by a function of the
 *   connection (`casebook_keep(rowid)`: the result bitmap) inside FTS5's own walk;
 * - a libSQL server through @libsql/client (several nodes), where no function of ours can run
 *   inside the server: the same query is read newest first, page by page, and filtered by the
 *   same bitmap here, until the ranking window is full — the same rows in the same order.
 *
 * Rowids are bound as BigInt: FTS5 uses a rowid constraint only when its value is an SQL INTEGER,
 * and both drivers bind a JavaScript number as REAL.
 */
import type Database from "better-sqlite3";
import type { Client, InArgs, Transaction } from "@libsql/client/http";

/** The facet columns of an entry changed since a revision. */
export interface EntryRow {
  doc_id: number;
  id: string;
  make: string | null;
  make_key: string | null;
  model: string | null;
  model_key: string | null;
  year: number | null;
  engine: string | null;
  engine_key: string | null;
  system: string | null;
  code_list: string;
  confirmed: number;
  hidden: number;
  rev: number;
}

/** What a hit shows. */
export interface HitRow {
  id: string;
  title: string;
  vehicle: string;
  year: number | null;
  make: string | null;
  model: string | null;
  engine: string | null;
  code_list: string;
  root_cause: string;
  diagnosis: string;
  complaint: string;
  fix: string;
  symptoms: string;
  confirmed: number;
  published_at: number;
}

export interface EngineReader {
  maxRev(): Promise<number>;
  changed(sinceRev: number): Promise<EntryRow[]>;
  phraseRowids(match: string): Promise<number[]>;
  phraseHas(match: string, doc: number): Promise<boolean>;
  /** [doc, bm25] of the newest `limit` matches */
  rank(match: string, limit: number): Promise<[number, number][]>;
  /** the same, counting only the documents set in `keep` */
  rankKept(match: string, limit: number, keep: Uint32Array): Promise<[number, number][]>;
  /** the snippets of one document (the columns in the engine's order) */
  snippet(match: string, doc: number): Promise<string[] | undefined>;
  row(doc: number): Promise<HitRow | undefined>;
}

export interface EngineSource {
  /** Runs `fn` inside one read snapshot. */
  read<T>(fn: (r: EngineReader) => Promise<T>): Promise<T>;
}

/** bm25's column weights: vehicle, complaint, symptoms, codes, diagnosis, root cause, fix, and the facet tokens (0). */
const BM25_WEIGHTS = [2.0, 1.0, 0.8, 2.0, 1.2, 1.5, 1.0, 0.0];
export const BM25_CALL = `bm25(casebook_fts, ${BM25_WEIGHTS.join(", ")})`;
const SNIPPET_COLS = `${[4, 1, 5, 6, -1].map((c) => `snippet(casebook_fts, ${c}, char(2), char(3), '…', 18)`).join(", ")}`;
const SQL = {
  maxRev: "SELECT coalesce(max(rev), 0) AS rev FROM casebook_entry",
  changed:
    "SELECT doc_id, id, make, make_key, model, model_key, year, engine, engine_key, system, code_list, confirmed, hidden, rev FROM casebook_entry WHERE rev > ? ORDER BY rev",
  phraseRowids: "SELECT rowid FROM casebook_fts WHERE casebook_fts MATCH ?",
  phraseHas: "SELECT 1 FROM casebook_fts WHERE casebook_fts MATCH ? AND rowid = ?",
  rank: `SELECT rowid AS doc, ${BM25_CALL} AS s FROM casebook_fts WHERE casebook_fts MATCH ? ORDER BY rowid DESC LIMIT ?`,
  rankKeep: `SELECT rowid AS doc, ${BM25_CALL} AS s FROM casebook_fts WHERE casebook_fts MATCH ? AND casebook_keep(rowid) ORDER BY rowid DESC LIMIT ?`,
  rankPage: `SELECT rowid AS doc, ${BM25_CALL} AS s FROM casebook_fts WHERE casebook_fts MATCH ? AND rowid < ? ORDER BY rowid DESC LIMIT ?`,
  snippet: `SELECT ${SNIPPET_COLS} FROM casebook_fts WHERE casebook_fts MATCH ? AND rowid = ?`,
  row: "SELECT id, title, vehicle, year, make, model, engine, code_list, root_cause, diagnosis, complaint, fix, symptoms, confirmed, published_at FROM casebook_entry WHERE doc_id = ?",
};

const kept = (keep: Uint32Array, d: number) => (keep[d >>> 5] & (1 << (d & 31))) !== 0;

/** The engine's reads on a better-sqlite3 connection (prepared once). */
export function sqliteEngineSource(db: Database.Database): EngineSource {
  let keep: Uint32Array | null = null;
  // the filter of the ranking query: true for the documents of the current result set
  db.function("casebook_keep", { deterministic: false }, (rowid: unknown) =>
    keep !== null && kept(keep, Number(rowid)) ? 1 : 0,
  );
  const st = {
    maxRev: db.prepare(SQL.maxRev),
    changed: db.prepare(SQL.changed),
    phraseRowids: db.prepare(SQL.phraseRowids).pluck(),
    phraseHas: db.prepare(SQL.phraseHas).pluck(),
    rank: db.prepare(SQL.rank).raw(),
    rankKeep: db.prepare(SQL.rankKeep).raw(),
    snippet: db.prepare(SQL.snippet).raw(),
    row: db.prepare(SQL.row),
  };
  const reader: EngineReader = {
    maxRev: async () => (st.maxRev.get() as { rev: number }).rev,
    changed: async (since) => st.changed.all(since) as EntryRow[],
    phraseRowids: async (m) => st.phraseRowids.all(m) as number[],
    phraseHas: async (m, d) => !!st.phraseHas.get(m, BigInt(d)),
    rank: async (m, limit) => st.rank.all(m, limit) as [number, number][],
    async rankKept(m, limit, k) {
      keep = k;
      try {
        return st.rankKeep.all(m, limit) as [number, number][];
      } finally {
        keep = null;
      }
    },
    snippet: async (m, d) => st.snippet.get(m, BigInt(d)) as string[] | undefined,
    row: async (d) => st.row.get(d) as HitRow | undefined,
  };
  return {
    async read(fn) {
      // one snapshot for the whole search (answered within microtasks: every read is synchronous)
      const own = !db.inTransaction;
      if (own) db.exec("BEGIN");
      try {
        return await fn(reader);
      } finally {
        if (own && db.inTransaction) db.exec("COMMIT");
      }
    },
  };
}

const RANK_PAGE = 2000;

/** The engine's reads on a libSQL server, each search in one read transaction. */
export function libsqlEngineSource(client: Client): EngineSource {
  const rows = async <T>(tx: Transaction, sql: string, args: InArgs) =>
    (await tx.execute({ sql, args })).rows as unknown as T[];
  const arrays = async (tx: Transaction, sql: string, args: InArgs) =>
    (await tx.execute({ sql, args })).rows.map((r) => Array.from(r as unknown as ArrayLike<unknown>));
  const reader = (tx: Transaction): EngineReader => ({
    maxRev: async () => Number((await rows<{ rev: number }>(tx, SQL.maxRev, []))[0]?.rev ?? 0),
    changed: async (since) => (await rows<EntryRow>(tx, SQL.changed, [since])).map((r) => ({ ...r })),
    phraseRowids: async (m) => (await arrays(tx, SQL.phraseRowids, [m])).map((r) => Number(r[0])),
    phraseHas: async (m, d) => (await arrays(tx, SQL.phraseHas, [m, BigInt(d)])).length > 0,
    rank: async (m, limit) => (await arrays(tx, SQL.rank, [m, limit])).map((r) => [Number(r[0]), Number(r[1])]),
    async rankKept(m, limit, keep) {
      const out: [number, number][] = [];
      let below = BigInt(Number.MAX_SAFE_INTEGER);
      for (;;) {
        const page = await arrays(tx, SQL.rankPage, [m, below, RANK_PAGE]);
        for (const r of page) {
          const d = Number(r[0]);
          if (kept(keep, d)) out.push([d, Number(r[1])]);
          if (out.length >= limit) return out;
        }
        if (page.length < RANK_PAGE) return out;
        below = BigInt(Number(page[page.length - 1][0]));
      }
    },
    snippet: async (m, d) => (await arrays(tx, SQL.snippet, [m, BigInt(d)]))[0] as string[] | undefined,
    row: async (d) => {
      const r = (await rows<HitRow>(tx, SQL.row, [d]))[0];
      return r ? { ...r } : undefined;
    },
  });
  return {
    async read(fn) {
      const tx = await client.transaction("read");
      try {
        return await fn(reader(tx));
      } finally {
        tx.close();
      }
    },
  };
}
