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
 * 4. Ranking: bm25 (FTS5's, with column weights) over a bounded candidate set — the newest
 *    RANK_WINDOW entries of the result set, read with `ORDER BY rowid DESC LIMIT` (FTS5 walks its
 *    doclists in rowid order and stops there). Filters reach that query exactly through the
 *    casebook_keep(rowid) function (the result bitmap), helped by the most selective filter as a
 *    facet token of the `tags` column (weight 0) so FTS5 can skip through its doclist. Two
 *    refinements keep the cost bounded (see rankPlan): the last word is ranked as the complete
 *    word when it is one (entries where it only starts a longer word follow), and words in more
 *    than half of the entries are left out of bm25 (FTS5 gives them its idf floor anyway). When a
 *    search has at most RANK_WINDOW results the order is the full bm25 order; beyond, the older
 *    results follow the ranked ones newest first. The plain query — bm25 over every match of a
 *    common word — costs 1–2 µs per matching row, 65–110 ms over 100,000 entries.
 * 5. Snippets: FTS5 snippet() for the page's rows only, with the words as complete words (a
 *    prefix phrase would make FTS5 rebuild the prefix's doclist for each row), marked with U+0002
 *    … U+0003 (stored text never contains those characters: shared/domain/anonymise.ts
 *    stripControls); a row that matched only through a prefix gets a snippet marked in JavaScript.
 *
 * Rowids are bound as BigInt: FTS5 uses a rowid constraint only when its value is an SQL
 * INTEGER, and better-sqlite3 binds a JS number as REAL — FTS5 then ignores `rowid = ?` (and
 * reports it handled, so every matching row comes back).
 */
import type Database from "better-sqlite3";
import {
  BM25_CALL,
  sqliteEngineSource,
  type EngineReader,
  type EngineSource,
  type EntryRow,
  type HitRow,
} from "./casebook-search-source";
import type { CasebookSearchHit, CasebookSearchResult, FacetCount, FacetDim } from "../../shared/schemas/casebook";

export { SNIPPET_OPEN, SNIPPET_CLOSE, facetDims } from "../../shared/schemas/casebook";
export type { CasebookSearchHit, CasebookSearchResult, FacetCount, FacetDim } from "../../shared/schemas/casebook";

/** The indexed content columns, their bm25 weights, and the facet-token column (weight 0). */
export const CONTENT_COLUMNS = ["vehicle", "complaint", "symptoms", "codes", "diagnosis", "root_cause", "fix"] as const;

/** How many of the newest results bm25 ranks. */
export const RANK_WINDOW = 1000;
/** A word in more than half of the entries and in more than this many is left out of bm25 (see rankPlan). */
export const COMMON_DOCS = 5000;
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
  const toks =
    q
      .normalize("NFKC")
      .toLowerCase()
      .match(/[\p{L}\p{N}]+/gu) ?? [];
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

const TAG_PREFIX: Record<Exclude<FacetDim, "confirmed">, string> = {
  make: "xmk",
  model: "xmd",
  year: "xyr",
  engine: "xen",
  system: "xsy",
  code: "xcd",
};

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
  count(): number {
    let n = 0;
    const w = this.words;
    for (let i = 0; i < w.length; i++) {
      let x = w[i];
      x = x - ((x >>> 1) & 0x55555555);
      x = (x & 0x33333333) + ((x >>> 2) & 0x33333333);
      n += (((x + (x >>> 4)) & 0x0f0f0f0f) * 0x01010101) >>> 24;
    }
    return n;
  }
}

/** The set bits of a bitmap, ascending. */
function bitsToList(words: Uint32Array): Int32Array {
  let n = 0;
  for (let i = 0; i < words.length; i++) {
    let x = words[i];
    x = x - ((x >>> 1) & 0x55555555);
    x = (x & 0x33333333) + ((x >>> 2) & 0x33333333);
    n += (((x + (x >>> 4)) & 0x0f0f0f0f) * 0x01010101) >>> 24;
  }
  const out = new Int32Array(n);
  let k = 0;
  for (let i = 0; i < words.length; i++) {
    let bits = words[i];
    while (bits !== 0) {
      const t = bits & -bits;
      out[k++] = (i << 5) + (31 - Math.clz32(t));
      bits ^= t;
    }
  }
  return out;
}

interface ScanArrays {
  visible: Uint8Array;
  make: Int32Array;
  model: Int32Array;
  year: Int16Array;
  engine: Int32Array;
  system: Int32Array;
  confirmed: Uint8Array;
  code4: Int32Array;
  codeMore: Map<number, Int32Array>;
}
interface ScanFilters {
  unfiltered: boolean;
  make: number;
  model: number;
  year: boolean;
  yearLo: number;
  yearHi: number;
  engine: number;
  system: number;
  code: number;
  confirmed: number;
}
interface ScanCounts {
  make: Int32Array;
  model: Int32Array;
  engine: Int32Array;
  system: Int32Array;
  code: Int32Array;
  year: Int32Array;
  confirmed: Int32Array;
}

/**
 * The one pass over the candidate documents: sets the result bits, returns the total, and
 * counts each facet over the documents that pass every filter but that facet's own (a document
 * failing two filters counts nowhere). Kept small and monomorphic so the JIT compiles it well.
 */
function scan(docs: Int32Array, a: ScanArrays, f: ScanFilters, c: ScanCounts, res: Uint32Array): number {
  const { visible, make, model, year, engine, system, confirmed, code4, codeMore } = a;
  const cMake = c.make;
  const cModel = c.model;
  const cEngine = c.engine;
  const cSystem = c.system;
  const cCode = c.code;
  const cYear = c.year;
  const cConf = c.confirmed;
  const fMake = f.make;
  const fModel = f.model;
  const fEngine = f.engine;
  const fSystem = f.system;
  const fCode = f.code;
  const fConf = f.confirmed;
  const fYear = f.year;
  const lo = f.yearLo;
  const hi = f.yearHi;
  const unfiltered = f.unfiltered;
  const more = codeMore.size > 0;
  let total = 0;
  for (let k = 0; k < docs.length; k++) {
    const d = docs[k];
    if (visible[d] === 0) continue;
    const mk = make[d];
    const md = model[d];
    const yr = year[d];
    const en = engine[d];
    const sy = system[d];
    const cf = confirmed[d];
    const cb = d * CODE_SLOTS;
    let failed = 0;
    if (!unfiltered) {
      let fails = 0;
      if (fMake !== -1 && mk !== fMake) {
        fails++;
        failed = 1;
      }
      if (fModel !== -1 && md !== fModel) {
        fails++;
        failed = 2;
      }
      if (fYear && (yr === 0 || yr < lo || yr > hi)) {
        fails++;
        failed = 3;
      }
      if (fEngine !== -1 && en !== fEngine) {
        fails++;
        failed = 4;
      }
      if (fSystem !== -1 && sy !== fSystem) {
        fails++;
        failed = 5;
      }
      if (fCode !== -1) {
        let has = code4[cb] === fCode || code4[cb + 1] === fCode || code4[cb + 2] === fCode || code4[cb + 3] === fCode;
        if (!has && more) {
          const extra = codeMore.get(d);
          if (extra !== undefined) has = extra.indexOf(fCode) >= 0;
        }
        if (!has) {
          fails++;
          failed = 6;
        }
      }
      if (fConf !== -1 && cf !== fConf) {
        fails++;
        failed = 7;
      }
      if (fails > 1) continue;
    }
    if (failed === 0) {
      total++;
      res[d >>> 5] |= 1 << (d & 31);
    }
    if ((failed === 0 || failed === 1) && mk >= 0) cMake[mk]++;
    if ((failed === 0 || failed === 2) && md >= 0) cModel[md]++;
    if ((failed === 0 || failed === 3) && yr > 0) cYear[yr]++;
    if ((failed === 0 || failed === 4) && en >= 0) cEngine[en]++;
    if ((failed === 0 || failed === 5) && sy >= 0) cSystem[sy]++;
    if (failed === 0 || failed === 6) {
      for (let i = 0; i < CODE_SLOTS; i++) {
        const x = code4[cb + i];
        if (x < 0) break;
        cCode[x]++;
      }
      if (more) {
        const extra = codeMore.get(d);
        if (extra !== undefined) for (let i = 0; i < extra.length; i++) cCode[extra[i]]++;
      }
    }
    if (failed === 0 || failed === 7) cConf[cf]++;
  }
  return total;
}

const NO_FILTERS: ScanFilters = {
  unfiltered: true,
  make: -1,
  model: -1,
  year: false,
  yearLo: 0,
  yearHi: 0,
  engine: -1,
  system: -1,
  code: -1,
  confirmed: -1,
};

/** A phrase without its prefix star. */
function exactForm(phrase: string): string {
  return phrase.endsWith("*") ? phrase.slice(0, -1) : phrase;
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

const YEAR_BASE = 1900;
const CODE_SLOTS = 4;
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
  /** up to CODE_SLOTS code ids per entry inline (-1: none), more in codeMore */
  private code4 = new Int32Array(0);
  private codeMore = new Map<number, Int32Array>();
  private publicId: (string | undefined)[] = [];
  private dicts: Record<"make" | "model" | "engine" | "system" | "code", Dict> = {
    make: newDict(),
    model: newDict(),
    engine: newDict(),
    system: newDict(),
    code: newDict(),
  };
  private phraseCache = new Map<string, Bitmap>();
  private readonly source: EngineSource;

  private readonly rankWindow: number;
  private readonly commonDocs: number;

  /** `db`: a better-sqlite3 connection, or any EngineSource (a libSQL server: casebook-search-source.ts). */
  constructor(db: Database.Database | EngineSource, opts: { rankWindow?: number; commonDocs?: number } = {}) {
    this.rankWindow = opts.rankWindow ?? RANK_WINDOW;
    this.commonDocs = opts.commonDocs ?? COMMON_DOCS;
    this.source =
      "read" in db && typeof db.read === "function"
        ? (db as EngineSource)
        : sqliteEngineSource(db as Database.Database);
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
    const c4 = new Int32Array(cap * CODE_SLOTS).fill(-1);
    c4.set(this.code4);
    this.code4 = c4;
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
  async refresh(reader?: EngineReader): Promise<void> {
    if (!reader) return this.source.read((r) => this.refresh(r));
    // entries are hidden, never deleted; a rev that went backwards (a restored file) reloads all
    const head = { rev: await reader.maxRev() };
    if (head.rev === this.rev) return;
    if (head.rev < this.rev) this.reset();
    const rows: EntryRow[] = await reader.changed(this.rev < 0 ? -1 : this.rev);
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
      let list: string[];
      try {
        list = JSON.parse(r.code_list) as string[];
      } catch {
        list = [];
      }
      const ids = [...new Set(list.map((c) => String(c).toUpperCase()))].map((c) => dictId(this.dicts.code, c, c));
      for (let i = 0; i < CODE_SLOTS; i++) this.code4[d * CODE_SLOTS + i] = i < ids.length ? ids[i] : -1;
      if (ids.length > CODE_SLOTS) this.codeMore.set(d, Int32Array.from(ids.slice(CODE_SLOTS)));
      else this.codeMore.delete(d);
      if (patch) {
        for (const [match, bm] of this.phraseCache) {
          if (r.hidden) bm.clear(d);
          else if (await reader.phraseHas(match, d)) bm.set(d);
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
    this.code4 = new Int32Array(0);
    this.codeMore.clear();
    this.publicId = [];
    this.dicts = { make: newDict(), model: newDict(), engine: newDict(), system: newDict(), code: newDict() };
    this.phraseCache.clear();
  }

  /** The entries matching one phrase in the content columns (cached, least recently used dropped). */
  private async phraseBitmap(r: EngineReader, phrase: string): Promise<Bitmap> {
    const match = contentMatch([phrase]);
    const hit = this.phraseCache.get(match);
    if (hit) {
      this.phraseCache.delete(match);
      this.phraseCache.set(match, hit);
      return hit;
    }
    const bm = new Bitmap(this.cap);
    for (const d of await r.phraseRowids(match)) bm.set(d);
    this.phraseCache.set(match, bm);
    while (this.phraseCache.size > CACHE_SIZE) this.phraseCache.delete(this.phraseCache.keys().next().value!);
    return bm;
  }

  /** One search, read in one snapshot. */
  search(input: CasebookSearchQuery): Promise<CasebookSearchResult> {
    return this.source.read((r) => this.searchInSnapshot(r, input));
  }

  private async searchInSnapshot(r: EngineReader, input: CasebookSearchQuery): Promise<CasebookSearchResult> {
    await this.refresh(r);
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
    const phraseDocs: number[] = [];
    for (const p of phrases) {
      const bm = await this.phraseBitmap(r, p);
      phraseDocs.push(bm.count());
      match = match ? intersect(match, bm.words) : bm.words;
    }

    // ---- one pass: total, the result bitmap, facet counts (each dimension without its own filter)
    const unfiltered =
      fMake === -1 && fModel === -1 && !fYear && fEngine === -1 && fSystem === -1 && fCode === -1 && fConfirmed === -1;
    let counts: ScanCounts;
    let result: Bitmap;
    let total: number;
    if (!match && unfiltered) {
      // the whole casebook: counted once per change
      const all = this.unfilteredAll();
      counts = all.counts;
      result = all.bitmap;
      total = all.total;
    } else {
      counts = this.newCounts();
      result = new Bitmap(this.cap);
      const docs = match ? bitsToList(match) : this.visibleDocs();
      total = scan(
        docs,
        this.scanArrays(),
        {
          unfiltered,
          make: fMake,
          model: fModel,
          year: fYear,
          yearLo: yFrom ?? 0,
          yearHi: yTo ?? YEAR_SLOTS,
          engine: fEngine,
          system: fSystem,
          code: fCode,
          confirmed: fConfirmed,
        },
        counts,
        result.words,
      );
    }
    const res = result.words;

    // ---- order and page
    const start = (page - 1) * pageSize;
    const pageDocs: { doc: number; score: number | null }[] = [];
    let ranking: CasebookSearchResult["ranking"] = { method: "recent", candidates: total, exact: true };
    const rankPlan = phrases.length ? await this.rankPlan(r, phrases, phraseDocs) : null;
    const rankMatch = rankPlan ? rankPlan.match : null;
    let ranked: [number, number][] = [];
    if (total > 0 && start < total && sort === "relevance") {
      if (rankPlan && rankPlan.match) {
        if (unfiltered) {
          ranked = await r.rank(rankPlan.match, this.rankWindow);
        } else {
          // the most selective filter goes into the MATCH as a facet token (FTS5 then skips
          // through its doclist); all filters are checked exactly by casebook_keep (the result set)
          const tag = this.selectiveTag(input, fYear ? [yFrom, yTo] : null);
          const fullMatch = tag ? `${rankPlan.match} AND tags : (${tag})` : rankPlan.match;
          ranked = await r.rankKept(fullMatch, this.rankWindow, res);
        }
        ranked.sort((a, b) => a[1] - b[1] || b[0] - a[0]);
        ranking = { method: "bm25", candidates: ranked.length, exact: ranked.length >= total && rankPlan.complete };
      } else {
        // every word is in more than half of the entries: bm25 tells them apart by nothing but
        // FTS5's idf floor, so the newest come first
        ranking = { method: "recent", candidates: total, exact: false };
      }
    }
    const inRanked = new Set<number>();
    for (const [doc, s] of ranked.slice(start, start + pageSize))
      pageDocs.push({ doc, score: Number((-s).toPrecision(6)) });
    if (total > 0 && pageDocs.length < pageSize && start + pageDocs.length < total) {
      // past the ranked ones (or not ranked): the remaining results, newest first
      for (const [doc] of ranked) inRanked.add(doc);
      let skip = Math.max(0, start - ranked.length);
      this.eachDesc(result, (d) => {
        if (inRanked.has(d)) return true;
        if (skip > 0) return (skip--, true);
        pageDocs.push({ doc: d, score: null });
        return pageDocs.length < pageSize;
      });
    }

    const snippetMatch = phrases.length ? contentMatch([phrases.map(exactForm).join(" OR ")]) : null;
    const results: CasebookSearchHit[] = [];
    for (const { doc, score } of pageDocs)
      results.push(await this.hit(r, doc, score, snippetMatch, queryTokens(input.q)));
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

  /**
   * The bm25 expression: the phrases as typed, but
   * - the last word as a complete word when it is one (documents where it is only the start of a
   *   longer word follow the ranked ones): a prefix phrase makes FTS5 merge the doclists of every
   *   word with that prefix on each query, which costs tens of ms for a common prefix;
   * - without words found in more than half of the entries (and in more than `commonDocs`): FTS5's
   *   bm25 gives them its idf floor (1e-6), so they add nothing to the order but would cost a pass
   *   over their whole doclist each time.
   * `complete` is false when the expression leaves matches out of the ranking.
   */
  private async rankPlan(
    r: EngineReader,
    phrases: string[],
    docs: number[],
  ): Promise<{ match: string | null; complete: boolean }> {
    const n = this.visibleCount();
    const keep: string[] = [];
    let complete = true;
    for (const [i, p] of phrases.entries()) {
      let phrase = p;
      let df = docs[i];
      if (p.endsWith("*")) {
        const exact = exactForm(p);
        const e = (await this.phraseBitmap(r, exact)).count();
        if (e > 0) {
          if (e < df) complete = false;
          phrase = exact;
          df = e;
        }
      }
      if (df > n / 2 && df > this.commonDocs) continue;
      keep.push(phrase);
    }
    return { match: keep.length ? contentMatch(keep) : null, complete };
  }

  private visibleCountCache = { rev: -2, n: 0, docs: new Int32Array(0) };
  private visibleDocs(): Int32Array {
    if (this.visibleCountCache.rev !== this.rev) {
      const list: number[] = [];
      for (let d = 0; d < this.cap; d++) if (this.visible[d]) list.push(d);
      this.visibleCountCache = { rev: this.rev, n: list.length, docs: Int32Array.from(list) };
    }
    return this.visibleCountCache.docs;
  }
  private visibleCount(): number {
    return this.visibleDocs().length;
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

  /**
   * The facet token (or OR of tokens, for a year range) of the filter that keeps the fewest
   * entries, when it keeps under half of them; null otherwise (the callback alone is cheaper than
   * FTS5 walking a doclist that long).
   */
  private selectiveTag(input: CasebookSearchQuery, years: [number | null, number | null] | null): string | null {
    const all = this.unfilteredCounts();
    const n = this.visibleCount();
    let best: { expr: string; df: number } | null = null;
    const consider = (expr: string | null, df: number) => {
      if (expr && (best === null || df < best.df)) best = { expr, df };
    };
    const dimOf = (dim: "make" | "model" | "engine" | "system", v: string | undefined) => {
      const k = facetKey(v);
      if (k == null) return;
      const id = this.dicts[dim].ids.get(k);
      consider(`"${facetTag(dim, v!)}"`, id === undefined ? 0 : all[dim][id]);
    };
    dimOf("make", input.make);
    dimOf("model", input.model);
    dimOf("engine", input.engine);
    dimOf("system", input.system);
    if (input.code) {
      const id = this.dicts.code.ids.get(input.code.trim().toUpperCase());
      consider(`"${facetTag("code", input.code)}"`, id === undefined ? 0 : all.code[id]);
    }
    if (input.confirmed !== undefined)
      consider(`"${facetTag("confirmed", input.confirmed)}"`, all.confirmed[input.confirmed ? 1 : 0]);
    if (years) {
      const [lo, hi] = years;
      const tokens: string[] = [];
      let df = 0;
      for (let y = 1; y < YEAR_SLOTS; y++) {
        if (all.year[y] > 0 && (lo == null || y >= lo) && (hi == null || y <= hi)) {
          tokens.push(`"xyr${y + YEAR_BASE}q"`);
          df += all.year[y];
        }
      }
      if (tokens.length > 0 && tokens.length <= 12) consider(`(${tokens.join(" OR ")})`, df);
    }
    const b = best as { expr: string; df: number } | null;
    return b && b.df < n / 2 ? b.expr : null;
  }

  private unfilteredCache: { rev: number; counts: ScanCounts; bitmap: Bitmap; total: number } | null = null;
  /** Every visible entry's facet values counted, and their bitmap (once per change). */
  private unfilteredAll(): { counts: ScanCounts; bitmap: Bitmap; total: number } {
    if (this.unfilteredCache?.rev === this.rev) return this.unfilteredCache;
    const counts = this.newCounts();
    const bitmap = new Bitmap(this.cap);
    const total = scan(this.visibleDocs(), this.scanArrays(), NO_FILTERS, counts, bitmap.words);
    this.unfilteredCache = { rev: this.rev, counts, bitmap, total };
    return this.unfilteredCache;
  }
  private unfilteredCounts(): ScanCounts {
    return this.unfilteredAll().counts;
  }

  private newCounts(): ScanCounts {
    return {
      make: new Int32Array(this.dicts.make.labels.length),
      model: new Int32Array(this.dicts.model.labels.length),
      engine: new Int32Array(this.dicts.engine.labels.length),
      system: new Int32Array(this.dicts.system.labels.length),
      code: new Int32Array(this.dicts.code.labels.length),
      year: new Int32Array(YEAR_SLOTS),
      confirmed: new Int32Array(2),
    };
  }

  private scanArrays(): ScanArrays {
    return {
      visible: this.visible,
      make: this.make,
      model: this.model,
      year: this.year,
      engine: this.engine,
      system: this.system,
      confirmed: this.confirmed,
      code4: this.code4,
      codeMore: this.codeMore,
    };
  }

  private async hit(
    reader: EngineReader,
    doc: number,
    score: number | null,
    snippetMatch: string | null,
    tokens: string[],
  ): Promise<CasebookSearchHit> {
    const r = (await reader.row(doc)) as HitRow; // a ranked document always has its row
    let snippet = "";
    // snippet() of FTS5 with the words as complete words (cheap); a row that matched only through
    // the start of a longer word gets its snippet here instead
    if (snippetMatch) {
      const cols = (await reader.snippet(snippetMatch, doc)) ?? [];
      snippet = cols.find((x) => x && x.includes(SNIPPET_OPEN_CHAR)) ?? "";
    }
    if (!snippet && tokens.length)
      snippet = prefixSnippet([r.diagnosis, r.complaint, r.root_cause, r.fix, r.symptoms, r.vehicle], tokens);
    if (!snippet) snippet = clip(r.diagnosis || r.complaint, 200);
    let codes: string[];
    try {
      codes = JSON.parse(r.code_list) as string[];
    } catch {
      codes = [];
    }
    return {
      id: r.id,
      title: r.title,
      vehicle: vehicleLabel(r),
      codes,
      rootCause: r.root_cause,
      snippet,
      score,
      confirmed: !!r.confirmed,
      publishedAt: new Date(r.published_at).toISOString(),
    };
  }

  private presentFacets(c: {
    make: Int32Array;
    model: Int32Array;
    engine: Int32Array;
    system: Int32Array;
    code: Int32Array;
    year: Int32Array;
    confirmed: Int32Array;
  }): Record<FacetDim, FacetCount[]> {
    const fromDict = (
      dim: "make" | "model" | "engine" | "system" | "code",
      counts: Int32Array,
      limit: number,
    ): FacetCount[] => {
      const out: FacetCount[] = [];
      const keys = [...this.dicts[dim].ids.keys()];
      for (let i = 0; i < counts.length; i++)
        if (counts[i] > 0) out.push({ value: keys[i], label: this.dicts[dim].labels[i], count: counts[i] });
      out.sort((a, b) => b.count - a.count || a.label.localeCompare(b.label));
      return out.slice(0, limit);
    };
    const years: FacetCount[] = [];
    for (let y = YEAR_SLOTS - 1; y > 0; y--)
      if (c.year[y] > 0) years.push({ value: String(y + YEAR_BASE), label: String(y + YEAR_BASE), count: c.year[y] });
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

/**
 * A snippet marked in plain JavaScript: about 18 words around the first word that starts with the
 * last search word (or equals another one), matches between the markers.
 */
export function prefixSnippet(texts: string[], tokens: string[]): string {
  const last = tokens[tokens.length - 1];
  const others = new Set(tokens.slice(0, -1));
  const isHit = (w: string) => {
    const lw = w.normalize("NFKC").toLowerCase();
    return lw.startsWith(last) || others.has(lw);
  };
  for (const text of texts) {
    if (!text) continue;
    const parts = text.split(/(\s+)/);
    const words = parts.filter((_, i) => i % 2 === 0);
    const at = words.findIndex((w) => (w.match(/[\p{L}\p{N}]+/gu) ?? []).some(isHit));
    if (at < 0) continue;
    const from = Math.max(0, at - 6);
    const to = Math.min(words.length, from + 18);
    const out = words
      .slice(from, to)
      .map((w) =>
        w.replace(/[\p{L}\p{N}]+/gu, (m) => (isHit(m) ? `${SNIPPET_OPEN_CHAR}${m}${SNIPPET_CLOSE_CHAR}` : m)),
      );
    return `${from > 0 ? "…" : ""}${out.join(" ")}${to < words.length ? "…" : ""}`;
  }
  return "";
}
const SNIPPET_OPEN_CHAR = "\u0002";
const SNIPPET_CLOSE_CHAR = "\u0003";

/** "2016 Veltra Quillon 2.0 I4" from the entry's facet columns. */
export function vehicleLabel(r: {
  year: number | null;
  make: string | null;
  model: string | null;
  engine: string | null;
}): string {
  return [r.year, r.make, r.model, r.engine].filter((x) => x != null && String(x).trim() !== "").join(" ");
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
  const total =
    (db.prepare("SELECT count(*) FROM casebook_fts WHERE casebook_fts MATCH ?").pluck().get(m) as number) ?? 0;
  const ids = db
    .prepare(`SELECT rowid FROM casebook_fts WHERE casebook_fts MATCH ? ORDER BY ${BM25_CALL} LIMIT ?`)
    .pluck()
    .all(m, limit) as number[];
  return { total, ids };
}
