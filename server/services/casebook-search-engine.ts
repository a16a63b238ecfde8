/**
 * The casebook search engine: FTS5 matching with bm25 ranking, filters and facet counts.
 *
 * It runs on its own read-only SQLite connection inside a worker thread
 * (casebook-search-worker.ts), so a search never holds up the server's event loop; tests and the
 * benchmark may also run it in-thread. How one search works:
 *
 * 1. The user's words become FTS5 phrases, every one quoted (the text is split into letters and
 *    digits, so nothing the user types can reach the FTS5 query syntax), the last one a prefix
 *    (`"coi"*`); all of them restricted to the content columns with a column filter.
 * 2. Each phrase's matching entries are a bitmap over doc ids, kept in a small LRU cache and kept
 *    in step with changes (see `refresh`). The match set is their intersection (FTS5's implicit
 *    AND), so `total` and every facet count are exact, whatever the words, at the cost of one
 *    pass over the bitmap — no bm25 work at all for counting.
 * 3. Filters and facet counts come from typed arrays of each entry's facet values (make, model,
 *    model year, engine, system, codes, confirmed), loaded once and updated by `rev`. Facets are
 *    counted the usual way for filter chips: each facet's counts apply every other filter but not
 *    its own, so the alternatives stay visible.
 * 4. Ranking: bm25 (with column weights) over a bounded candidate set — the newest
 *    RANK_WINDOW entries of the result set, read with `ORDER BY rowid DESC LIMIT` (FTS5 walks its
 *    doclists in rowid order and stops there; the filters are in the MATCH expression as facet
 *    tokens of the `tags` column, weight 0, so the candidates are exactly the newest results). When
 *    a search has at most RANK_WINDOW results the ranking is the full bm25 order; beyond that the
 *    older results follow the ranked ones newest first. bm25 over every match of a very common word
 *    costs ~1–2 µs per matching row (65–110 ms over 100,000 entries); this is bounded.
 * Rowids are bound as BigInt: FTS5 uses a rowid constraint only when its value is an SQL
 * INTEGER, and better-sqlite3 binds a JS number as REAL — FTS5 then ignores `rowid = ?` (and
 * reports it handled, so every matching row comes back).
 * 5. Snippets: FTS5 snippet() for the page's rows only, marked with U+0002 … U+0003 (stored text
 *    never contains those characters: shared/domain/anonymise.ts stripControls).
 */
import type Database from "better-sqlite3";
import type { CasebookSearchHit, CasebookSearchResult, FacetCount, FacetDim } from "../../shared/schemas/casebook";

export { SNIPPET_OPEN, SNIPPET_CLOSE, facetDims } from "../../shared/schemas/casebook";
export type { CasebookSearchHit, CasebookSearchResult, FacetCount, FacetDim } from "../../shared/schemas/casebook";

/** The indexed content columns, their bm25 weights, and the facet-token column (weight 0). */
export const CONTENT_COLUMNS = ["vehicle", "complaint", "symptoms", "codes", "diagnosis", "root_cause", "fix"] as const;
const BM25_WEIGHTS = [2.0, 1.0, 0.8, 2.0, 1.2, 1.5, 1.0, 0.0];
const BM25_CALL = `bm25(casebook_fts, ${BM25_WEIGHTS.join(", ")})`;

/** How many of the newest results bm25 ranks. */
export const RANK_WINDOW = 1000;
export const PAGE_SIZE = 20;
export const MAX_TERMS = 12;
const CACHE_SIZE = 256;
/** more membership checks than this (changed entries × cached phrases): drop the phrase cache instead of patching it */
const PATCH_LIMIT = 4096;

export interface CasebookSearchQuery {
  q?: string;
  make?: string;
  model?: string;
  yearFrom?: number;
  yearTo?: number;
  engine?: string;
  system?: string;
  code?: string;
  confirmed?: boolean;
  sort?: "relevance" | "recent";
  page?: number;
  pageSize?: number;
}

// ---------------------------------------------------------------------------------------------
// Query text → FTS5

/** Lower-case letters-and-digits tokens of the user's text, as unicode61 would split it. */
export function queryTokens(q: string | null | undefined): string[] {
  if (!q) return [];
  const toks = q.normalize("NFKC").toLowerCase().match(/[\p{L}\p{N}]+/gu) ?? [];
  return toks.filter((t) => t.length <= 64).slice(0, MAX_TERMS);
}

/** The FTS5 phrases for the user's words: each quoted, the last a prefix when ≥ 2 characters. */
export function queryPhrases(q: string | null | undefined): string[] {
  const toks = queryTokens(q);
  return toks.map((t, i) => (i === toks.length - 1 && t.length >= 2 ? `"${t}"*` : `"${t}"`));
}

const COLUMN_FILTER = `{${CONTENT_COLUMNS.join(" ")}}`;

/** A phrase (or several, ANDed) restricted to the content columns. */
export function contentMatch(phrases: readonly string[]): string {
  return `${COLUMN_FILTER} : (${phrases.join(" ")})`;
}

// ---------------------------------------------------------------------------------------------
// Facet keys and tokens (used by the writer too, so both sides agree)

/** The key a facet value is compared by: trimmed, lower-case, single spaces. */
export function facetKey(v: string | null | undefined): string | null {
  if (v == null) return null;
  const k = String(v).normalize("NFKC").trim().replace(/\s+/g, " ").toLowerCase();
  return k ? k : null;
}

function hex(s: string): string {
  let out = "";
  for (const b of new TextEncoder().encode(s)) out += b.toString(16).padStart(2, "0");
  return out;
}

const TAG_PREFIX: Record<Exclude<FacetDim, "confirmed">, string> = { make: "xmk", model: "xmd", year: "xyr", engine: "xen", system: "xsy", code: "xcd" };

/**
 * The facet token of a value for the `tags` column: "x" + dimension + hex of the key + "q". Only
 * letters and digits (one unicode61 token), and the trailing "q" ends in no suffix the porter
 * stemmer removes, so the token is indexed exactly as written.
 */
export function facetTag(dim: FacetDim, value: string | number | boolean | null | undefined): string | null {
  if (value == null) return null;
  if (dim === "confirmed") return value ? "xcfyq" : "xcfnq";
  if (dim === "year") return Number.isInteger(value) ? `xyr${value}q` : null;
  const key = dim === "code" ? String(value).trim().toUpperCase() : facetKey(String(value));
  return key ? `${TAG_PREFIX[dim]}${hex(key.toLowerCase())}q` : null;
}

export interface FacetSource {
  make?: string | null;
  model?: string | null;
  year?: number | null;
  engine?: string | null;
  system?: string | null;
  codes?: readonly string[] | null;
  confirmed?: boolean;
}

/** The `tags` column of an entry. */
export function facetTags(e: FacetSource): string {
  const tags = [
    facetTag("make", e.make),
    facetTag("model", e.model),
    facetTag("year", e.year ?? null),
    facetTag("engine", e.engine),
    facetTag("system", e.system),
    ...(e.codes ?? []).map((c) => facetTag("code", c)),
    facetTag("confirmed", e.confirmed ?? true),
  ];
  return tags.filter(Boolean).join(" ");
}

// ---------------------------------------------------------------------------------------------
// Bitmaps

class Bitmap {
  words: Uint32Array;
  constructor(capacityBits: number) {
    this.words = new Uint32Array(Math.max(1, (capacityBits + 31) >>> 5));
  }
  get capacity(): number {
    return this.words.length << 5;
  }
  ensure(bit: number): void {
    if (bit < this.capacity) return;
    const next = new Uint32Array(Math.max(this.words.length * 2, (bit + 32) >>> 5) + 1);
    next.set(this.words);
    this.words = next;
  }
  set(bit: number): void {
    this.ensure(bit);
    this.words[bit >>> 5] |= 1 << (bit & 31);
  }
  clear(bit: number): void {
    if (bit < this.capacity) this.words[bit >>> 5] &= ~(1 << (bit & 31));
  }
  has(bit: number): boolean {
    return bit < this.capacity && (this.words[bit >>> 5] & (1 << (bit & 31))) !== 0;
  }
}

/** a ∧ b (the result has the shorter length) */
function intersect(a: Uint32Array, b: Uint32Array): Uint32Array {
  const n = Math.min(a.length, b.length);
  const out = new Uint32Array(n);
  for (let i = 0; i < n; i++) out[i] = a[i] & b[i];
  return out;
}

// ---------------------------------------------------------------------------------------------
// The engine

interface Dict {
  ids: Map<string, number>;
  labels: string[];
}
const newDict = (): Dict => ({ ids: new Map(), labels: [] });
function dictId(d: Dict, key: string | null, label: string | null): number {
  if (key == null) return -1;
  let id = d.ids.get(key);
  if (id === undefined) {
    id = d.labels.length;
    d.ids.set(key, id);
    d.labels.push(label ?? key);
  } else if (label) d.labels[id] = label;
  return id;
}

interface EntryRow {
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

const YEAR_BASE = 1900;
const YEAR_SLOTS = 256;

export interface EngineStats {
  entries: number;
  cachedPhrases: number;
  rev: number;
}

export class CasebookSearchEngine {
  private rev = -1;
  private count = 0;
  private cap = 0;
  private visible = new Uint8Array(0);
  private make = new Int32Array(0);
  private model = new Int32Array(0);
  private engine = new Int32Array(0);
  private system = new Int32Array(0);
  private year = new Int16Array(0);
  private confirmed = new Uint8Array(0);
  private codes: (Int32Array | null)[] = [];
  private publicId: (string | undefined)[] = [];
  private dicts: Record<"make" | "model" | "engine" | "system" | "code", Dict> = {
    make: newDict(),
    model: newDict(),
    engine: newDict(),
    system: newDict(),
    code: newDict(),
  };
  private phraseCache = new Map<string, Bitmap>();
  private stmts: ReturnType<CasebookSearchEngine["prepare"]>;

  private readonly rankWindow: number;

  constructor(
    private readonly db: Database.Database,
    opts: { rankWindow?: number } = {},
  ) {
    this.rankWindow = opts.rankWindow ?? RANK_WINDOW;
    this.stmts = this.prepare();
  }

  private prepare() {
    const db = this.db;
    return {
      maxRev: db.prepare("SELECT coalesce(max(rev), 0) AS rev, count(*) AS n FROM casebook_entry"),
      changed: db.prepare(
        "SELECT doc_id, id, make, make_key, model, model_key, year, engine, engine_key, system, code_list, confirmed, hidden, rev FROM casebook_entry WHERE rev > ? ORDER BY rev",
      ),
      phraseRowids: db.prepare("SELECT rowid FROM casebook_fts WHERE casebook_fts MATCH ?").pluck(),
      phraseHas: db.prepare("SELECT 1 FROM casebook_fts WHERE casebook_fts MATCH ? AND rowid = ?").pluck(),
      rank: db.prepare(`SELECT rowid AS doc, ${BM25_CALL} AS s FROM casebook_fts WHERE casebook_fts MATCH ? ORDER BY rowid DESC LIMIT ?`).raw(),
      snippet: db.prepare(`SELECT snippet(casebook_fts, -1, char(2), char(3), '…', 18) FROM casebook_fts WHERE casebook_fts MATCH ? AND rowid = ?`).pluck(),
      rows: db.prepare("SELECT doc_id, id, title, vehicle, code_list, root_cause, diagnosis, complaint, confirmed, published_at FROM casebook_entry WHERE doc_id = ?"),
    };
  }

  stats(): EngineStats {
    return { entries: this.count, cachedPhrases: this.phraseCache.size, rev: this.rev };
  }

  private grow(doc: number): void {
    if (doc < this.cap) return;
    const cap = Math.max(1024, this.cap * 2, doc + 1);
    const g8 = (a: Uint8Array) => {
      const n = new Uint8Array(cap);
      n.set(a);
      return n;
    };
    const g32 = (a: Int32Array) => {
      const n = new Int32Array(cap).fill(-1);
      n.set(a);
      return n;
    };
    const y = new Int16Array(cap);
    y.set(this.year);
    this.visible = g8(this.visible);
    this.confirmed = g8(this.confirmed);
    this.make = g32(this.make);
    this.model = g32(this.model);
    this.engine = g32(this.engine);
    this.system = g32(this.system);
    this.year = y;
    this.cap = cap;
  }

  /** Loads entries changed since the last call (all of them the first time) and patches the phrase cache. */
  refresh(): void {
    const head = this.stmts.maxRev.get() as { rev: number; n: number };
    if (head.rev === this.rev) return;
    if (head.rev < this.rev || (this.rev >= 0 && head.n < this.count)) this.reset();
    const rows = this.stmts.changed.all(this.rev < 0 ? -1 : this.rev) as EntryRow[];
    const patch = this.rev >= 0 && rows.length * this.phraseCache.size <= PATCH_LIMIT;
    if (!patch) this.phraseCache.clear();
    for (const r of rows) {
      this.grow(r.doc_id);
      const d = r.doc_id;
      if (this.publicId[d] === undefined) this.count++;
      this.publicId[d] = r.id;
      this.visible[d] = r.hidden ? 0 : 1;
      this.make[d] = dictId(this.dicts.make, r.make_key, r.make);
      this.model[d] = dictId(this.dicts.model, r.model_key, r.model);
      this.engine[d] = dictId(this.dicts.engine, r.engine_key, r.engine);
      this.system[d] = dictId(this.dicts.system, facetKey(r.system), r.system);
      this.year[d] = r.year != null && r.year >= YEAR_BASE && r.year < YEAR_BASE + YEAR_SLOTS ? r.year - YEAR_BASE : 0;
      this.confirmed[d] = r.confirmed ? 1 : 0;
      let list: string[] = [];
      try {
        list = JSON.parse(r.code_list) as string[];
      } catch {
        list = [];
      }
      const ids = [...new Set(list.map((c) => String(c).toUpperCase()))].map((c) => dictId(this.dicts.code, c, c));
      this.codes[d] = ids.length ? Int32Array.from(ids) : null;
      if (patch) {
        for (const [match, bm] of this.phraseCache) {
          if (r.hidden) bm.clear(d);
          else if (this.stmts.phraseHas.get(match, BigInt(d))) bm.set(d);
          else bm.clear(d);
        }
      }
    }
    this.rev = head.rev;
  }

  private reset(): void {
    this.rev = -1;
    this.count = 0;
    this.cap = 0;
    this.visible = new Uint8Array(0);
    this.make = new Int32Array(0);
    this.model = new Int32Array(0);
    this.engine = new Int32Array(0);
    this.system = new Int32Array(0);
    this.year = new Int16Array(0);
    this.confirmed = new Uint8Array(0);
    this.codes = [];
    this.publicId = [];
    this.dicts = { make: newDict(), model: newDict(), engine: newDict(), system: newDict(), code: newDict() };
    this.phraseCache.clear();
  }

  /** The entries matching one phrase in the content columns (cached, least recently used dropped). */
  private phraseBitmap(phrase: string): Bitmap {
    const match = contentMatch([phrase]);
    const hit = this.phraseCache.get(match);
    if (hit) {
      this.phraseCache.delete(match);
      this.phraseCache.set(match, hit);
      return hit;
    }
    const bm = new Bitmap(this.cap);
    for (const d of this.stmts.phraseRowids.all(match) as number[]) bm.set(d);
    this.phraseCache.set(match, bm);
    while (this.phraseCache.size > CACHE_SIZE) this.phraseCache.delete(this.phraseCache.keys().next().value!);
    return bm;
  }

  search(input: CasebookSearchQuery): CasebookSearchResult {
    return this.db.transaction(() => this.searchInSnapshot(input))();
  }

  private searchInSnapshot(input: CasebookSearchQuery): CasebookSearchResult {
    this.refresh();
    const phrases = queryPhrases(input.q);
    const sort: "relevance" | "recent" = input.sort === "recent" || phrases.length === 0 ? "recent" : "relevance";
    const pageSize = Math.max(1, Math.min(100, input.pageSize ?? PAGE_SIZE));
    const page = Math.max(1, Math.floor(input.page ?? 1));

    // ---- the filters, as ids in the dictionaries (-2: a value no entry has → nothing passes)
    const want = (dim: "make" | "model" | "engine" | "system", v: string | undefined) => {
      const k = facetKey(v);
      return k == null ? -1 : (this.dicts[dim].ids.get(k) ?? -2);
    };
    const fMake = want("make", input.make);
    const fModel = want("model", input.model);
    const fEngine = want("engine", input.engine);
    const fSystem = want("system", input.system);
    const codeKey = input.code ? input.code.trim().toUpperCase() : "";
    const fCode = codeKey ? (this.dicts.code.ids.get(codeKey) ?? -2) : -1;
    const yFrom = input.yearFrom != null ? input.yearFrom - YEAR_BASE : null;
    const yTo = input.yearTo != null ? input.yearTo - YEAR_BASE : null;
    const fYear = yFrom != null || yTo != null;
    const fConfirmed = input.confirmed === undefined ? -1 : input.confirmed ? 1 : 0;

    // ---- the match set
    let match: Uint32Array | null = null;
    if (phrases.length > 0) {
      for (const p of phrases) {
        const bm = this.phraseBitmap(p).words;
        match = match ? intersect(match, bm) : bm;
      }
    }

    // ---- one pass: total, the result bitmap, facet counts (each dimension without its own filter)
    const counts = {
      make: new Int32Array(this.dicts.make.labels.length),
      model: new Int32Array(this.dicts.model.labels.length),
      engine: new Int32Array(this.dicts.engine.labels.length),
      system: new Int32Array(this.dicts.system.labels.length),
      code: new Int32Array(this.dicts.code.labels.length),
      year: new Int32Array(YEAR_SLOTS),
      confirmed: new Int32Array(2),
    };
    const result = new Bitmap(this.cap);
    let total = 0;
    const { visible, make, model, engine, system, year, confirmed, codes } = this;
    const visit = (d: number) => {
      if (!visible[d]) return;
      let fails = 0;
      let failed = 0;
      if (fMake !== -1 && make[d] !== fMake) (fails++, (failed = 1));
      if (fModel !== -1 && model[d] !== fModel) (fails++, (failed = 2));
      if (fYear) {
        const y = year[d];
        if (y === 0 || (yFrom != null && y < yFrom) || (yTo != null && y > yTo)) (fails++, (failed = 3));
      }
      if (fEngine !== -1 && engine[d] !== fEngine) (fails++, (failed = 4));
      if (fSystem !== -1 && system[d] !== fSystem) (fails++, (failed = 5));
      const cs = codes[d];
      if (fCode !== -1 && !(cs && cs.includes(fCode))) (fails++, (failed = 6));
      if (fConfirmed !== -1 && confirmed[d] !== fConfirmed) (fails++, (failed = 7));
      if (fails > 1) return;
      if (fails === 0) {
        total++;
        result.set(d);
      }
      if (fails === 0 || failed === 1) if (make[d] >= 0) counts.make[make[d]]++;
      if (fails === 0 || failed === 2) if (model[d] >= 0) counts.model[model[d]]++;
      if (fails === 0 || failed === 3) if (year[d] > 0) counts.year[year[d]]++;
      if (fails === 0 || failed === 4) if (engine[d] >= 0) counts.engine[engine[d]]++;
      if (fails === 0 || failed === 5) if (system[d] >= 0) counts.system[system[d]]++;
      if ((fails === 0 || failed === 6) && cs) for (let i = 0; i < cs.length; i++) counts.code[cs[i]]++;
      if (fails === 0 || failed === 7) counts.confirmed[confirmed[d]]++;
    };
    if (match) {
      for (let w = 0; w < match.length; w++) {
        let bits = match[w];
        while (bits !== 0) {
          const t = bits & -bits;
          visit((w << 5) + (31 - Math.clz32(t)));
          bits ^= t;
        }
      }
    } else {
      for (let d = 0; d < this.cap; d++) if (visible[d]) visit(d);
    }

    // ---- order and page
    const start = (page - 1) * pageSize;
    let pageDocs: { doc: number; score: number | null }[] = [];
    let ranking: CasebookSearchResult["ranking"] = { method: "recent", candidates: total, exact: true };
    let rankMatch: string | null = null;
    if (total > 0 && start < total) {
      if (sort === "relevance") {
        rankMatch = contentMatch(phrases);
        const tagExpr = this.filterTagExpression(input, fYear ? [yFrom, yTo] : null);
        const fullMatch = tagExpr ? `${rankMatch} AND tags : (${tagExpr})` : rankMatch;
        const ranked = (this.stmts.rank.all(fullMatch, this.rankWindow) as [number, number][]).filter(([d]) => result.has(d));
        ranked.sort((a, b) => a[1] - b[1] || b[0] - a[0]);
        ranking = { method: "bm25", candidates: ranked.length, exact: ranked.length >= total };
        const inRanked = new Set(ranked.map((r) => r[0]));
        const ordered: { doc: number; score: number | null }[] = ranked.slice(start, start + pageSize).map(([doc, s]) => ({ doc, score: Number((-s).toPrecision(6)) }));
        if (ordered.length < pageSize && start + ordered.length < total) {
          // beyond the ranked window: the remaining results, newest first
          let skip = Math.max(0, start - ranked.length);
          this.eachDesc(result, (d) => {
            if (inRanked.has(d)) return true;
            if (skip > 0) return (skip--, true);
            ordered.push({ doc: d, score: null });
            return ordered.length < pageSize;
          });
        }
        pageDocs = ordered;
      } else {
        let skip = start;
        this.eachDesc(result, (d) => {
          if (skip > 0) return (skip--, true);
          pageDocs.push({ doc: d, score: null });
          return pageDocs.length < pageSize;
        });
      }
    }

    const results = pageDocs.map(({ doc, score }) => this.hit(doc, score, rankMatch));
    return {
      total,
      page,
      pageSize,
      pages: Math.ceil(total / pageSize),
      sort,
      results,
      facets: this.presentFacets(counts),
      ranking,
      match: rankMatch,
    };
  }

  /** Calls fn for each set bit from the highest down while it returns true. */
  private eachDesc(bm: Bitmap, fn: (d: number) => boolean): void {
    const w = bm.words;
    for (let i = w.length - 1; i >= 0; i--) {
      let bits = w[i];
      while (bits !== 0) {
        const hi = 31 - Math.clz32(bits);
        if (!fn((i << 5) + hi)) return;
        bits &= ~(1 << hi);
      }
    }
  }

  /** The filters as facet-token phrases for the ranking MATCH (null when there are none). */
  private filterTagExpression(input: CasebookSearchQuery, years: [number | null, number | null] | null): string | null {
    const parts: string[] = [];
    const one = (dim: FacetDim, v: string | number | boolean | undefined) => {
      if (v === undefined || v === "") return;
      const t = facetTag(dim, v as string);
      if (t) parts.push(`"${t}"`);
    };
    one("make", input.make);
    one("model", input.model);
    one("engine", input.engine);
    one("system", input.system);
    one("code", input.code);
    if (input.confirmed !== undefined) one("confirmed", input.confirmed);
    if (years) {
      const [lo, hi] = years;
      const present: string[] = [];
      const seen = new Set<number>();
      for (let d = 0; d < this.cap; d++) {
        const y = this.year[d];
        if (y > 0 && !seen.has(y) && (lo == null || y >= lo) && (hi == null || y <= hi)) seen.add(y);
      }
      for (const y of [...seen].sort((a, b) => a - b)) present.push(`"xyr${y + YEAR_BASE}q"`);
      parts.push(present.length ? `(${present.join(" OR ")})` : `"xyrnoneq"`);
    }
    return parts.length ? parts.join(" AND ") : null;
  }

  private hit(doc: number, score: number | null, rankMatch: string | null): CasebookSearchHit {
    const r = this.stmts.rows.get(doc) as {
      id: string;
      title: string;
      vehicle: string;
      code_list: string;
      root_cause: string;
      diagnosis: string;
      complaint: string;
      confirmed: number;
      published_at: number;
    };
    let snippet = "";
    if (rankMatch) snippet = (this.stmts.snippet.get(rankMatch, BigInt(doc)) as string | undefined) ?? "";
    if (!snippet) snippet = clip(r.diagnosis || r.complaint, 200);
    let codes: string[] = [];
    try {
      codes = JSON.parse(r.code_list) as string[];
    } catch {
      codes = [];
    }
    return {
      id: r.id,
      title: r.title,
      vehicle: r.vehicle,
      codes,
      rootCause: r.root_cause,
      snippet,
      score,
      confirmed: !!r.confirmed,
      publishedAt: new Date(r.published_at).toISOString(),
    };
  }

  private presentFacets(c: { make: Int32Array; model: Int32Array; engine: Int32Array; system: Int32Array; code: Int32Array; year: Int32Array; confirmed: Int32Array }): Record<FacetDim, FacetCount[]> {
    const fromDict = (dim: "make" | "model" | "engine" | "system" | "code", counts: Int32Array, limit: number): FacetCount[] => {
      const out: FacetCount[] = [];
      const keys = [...this.dicts[dim].ids.keys()];
      for (let i = 0; i < counts.length; i++) if (counts[i] > 0) out.push({ value: keys[i], label: this.dicts[dim].labels[i], count: counts[i] });
      out.sort((a, b) => b.count - a.count || a.label.localeCompare(b.label));
      return out.slice(0, limit);
    };
    const years: FacetCount[] = [];
    for (let y = YEAR_SLOTS - 1; y > 0; y--) if (c.year[y] > 0) years.push({ value: String(y + YEAR_BASE), label: String(y + YEAR_BASE), count: c.year[y] });
    const confirmed: FacetCount[] = [];
    if (c.confirmed[1] > 0) confirmed.push({ value: "true", label: "Fix confirmed", count: c.confirmed[1] });
    if (c.confirmed[0] > 0) confirmed.push({ value: "false", label: "Not confirmed", count: c.confirmed[0] });
    return {
      make: fromDict("make", c.make, 30),
      model: fromDict("model", c.model, 30),
      year: years,
      engine: fromDict("engine", c.engine, 30),
      system: fromDict("system", c.system, 30),
      code: fromDict("code", c.code, 40),
      confirmed,
    };
  }
}

function clip(s: string, n: number): string {
  const t = (s ?? "").replace(/\s+/g, " ").trim();
  return t.length <= n ? t : t.slice(0, n - 1).replace(/\s+\S*$/, "") + "…";
}

/**
 * The plain way, for comparison in the benchmark and as a reference in tests: one FTS5 query
 * ranked with bm25 over every match, a count, and no facets.
 */
export function plainFtsSearch(db: Database.Database, q: string, limit = PAGE_SIZE): { total: number; ids: number[] } {
  const phrases = queryPhrases(q);
  if (phrases.length === 0) return { total: 0, ids: [] };
  const m = contentMatch(phrases);
  const total = (db.prepare("SELECT count(*) FROM casebook_fts WHERE casebook_fts MATCH ?").pluck().get(m) as number) ?? 0;
  const ids = db.prepare(`SELECT rowid FROM casebook_fts WHERE casebook_fts MATCH ? ORDER BY ${BM25_CALL} LIMIT ?`).pluck().all(m, limit) as number[];
  return { total, ids };
}
