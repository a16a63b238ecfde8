/**
 * The search engine against a brute-force reference over the same rows: 300 generated entries
 * (seeded PRNG), 200 generated searches (words, prefixes, codes, every filter, both sorts, several
 * pages). For each search the reference takes FTS5's own answer to the whole MATCH expression
 * (term matching and the porter tokenizer are SQLite's, tested upstream) and then does everything
 * the engine adds by brute force in plain JavaScript over the rows: filters, facet counts (each
 * dimension counted with every other filter, the usual faceted-search convention), totals, the
 * order (bm25 as FTS5 computes it with the same column weights, ties newest first, or newest
 * first) and the pages.
 */
import { beforeAll, describe, expect, it } from "vitest";
import { openFile, type Db } from "../../../server/db/client";
import { insertCasebookEntries } from "../../../server/services/casebook";
import {
  CasebookSearchEngine,
  contentMatch,
  facetKey,
  queryPhrases,
  RANK_WINDOW,
  type CasebookSearchQuery,
  type FacetCount,
  type FacetDim,
} from "../../../server/services/casebook-search-engine";
import { CASEBOOK_ENGINES, CASEBOOK_MAKES, syntheticEntries } from "../../factories/casebook";
import { createRng } from "../../helpers/prng";

const BM25 = "bm25(casebook_fts, 2.0, 1.0, 0.8, 2.0, 1.2, 1.5, 1.0, 0.0)";

interface Row {
  doc_id: number;
  id: string;
  make: string | null;
  model: string | null;
  year: number | null;
  engine: string | null;
  system: string | null;
  code_list: string;
  confirmed: number;
  hidden: number;
}

let db: Db;
let sqlite: NonNullable<Db["sqlite"]>;
let engine: CasebookSearchEngine;

beforeAll(async () => {
  db = openFile(":memory:");
  sqlite = db.sqlite!;
  await insertCasebookEntries(db, syntheticEntries(300, 11, { dense: true }), { now: new Date(Date.UTC(2026, 0, 1)) });
  engine = new CasebookSearchEngine(sqlite);
});

function rows(): Row[] {
  return sqlite
    .prepare("SELECT doc_id, id, make, model, year, engine, system, code_list, confirmed, hidden FROM casebook_entry")
    .all() as Row[];
}

/** The reference answer, by brute force. */
function reference(q: CasebookSearchQuery) {
  const all = rows().filter((r) => !r.hidden);
  const phrases = queryPhrases(q.q);
  let matched = all;
  const score = new Map<number, number>();
  let complete = true;
  if (phrases.length) {
    const ids = (m: string) =>
      new Set(sqlite.prepare("SELECT rowid FROM casebook_fts WHERE casebook_fts MATCH ?").pluck().all(m) as number[]);
    const matchedIds = ids(contentMatch(phrases));
    matched = all.filter((r) => matchedIds.has(r.doc_id));
    // the documented ranking rule: bm25 (FTS5's own) over the words as complete words; where the
    // last word is only the start of longer words in some entries, those follow the ranked ones
    const last = phrases[phrases.length - 1];
    const exact =
      last.endsWith("*") && ids(contentMatch([last.slice(0, -1)])).size > 0
        ? [...phrases.slice(0, -1), last.slice(0, -1)]
        : phrases;
    for (const r of sqlite
      .prepare(`SELECT rowid AS doc, ${BM25} AS s FROM casebook_fts WHERE casebook_fts MATCH ?`)
      .all(contentMatch(exact)) as { doc: number; s: number }[])
      score.set(r.doc, r.s);
  }
  const codes = (r: Row) => JSON.parse(r.code_list) as string[];
  const tests: Record<FacetDim, (r: Row) => boolean> = {
    make: (r) => q.make === undefined || facetKey(r.make) === facetKey(q.make),
    model: (r) => q.model === undefined || facetKey(r.model) === facetKey(q.model),
    year: (r) =>
      (q.yearFrom === undefined && q.yearTo === undefined) ||
      (r.year != null &&
        (q.yearFrom === undefined || r.year >= q.yearFrom) &&
        (q.yearTo === undefined || r.year <= q.yearTo)),
    engine: (r) => q.engine === undefined || facetKey(r.engine) === facetKey(q.engine),
    system: (r) => q.system === undefined || r.system === q.system,
    code: (r) => q.code === undefined || codes(r).includes(q.code),
    confirmed: (r) => q.confirmed === undefined || !!r.confirmed === q.confirmed,
  };
  const dims = Object.keys(tests) as FacetDim[];
  const passes = (r: Row, except?: FacetDim) => dims.every((d) => d === except || tests[d](r));
  const result = matched.filter((r) => passes(r));
  const facets = {} as Record<FacetDim, FacetCount[]>;
  for (const d of dims) {
    const counts = new Map<string, { label: string; count: number }>();
    const bump = (value: string, label: string) => {
      const c = counts.get(value) ?? { label, count: 0 };
      c.count++;
      c.label = label;
      counts.set(value, c);
    };
    for (const r of matched.filter((x) => passes(x, d))) {
      if (d === "make" && r.make) bump(facetKey(r.make)!, r.make);
      if (d === "model" && r.model) bump(facetKey(r.model)!, r.model);
      if (d === "engine" && r.engine) bump(facetKey(r.engine)!, r.engine);
      if (d === "system" && r.system) bump(r.system, r.system);
      if (d === "year" && r.year != null) bump(String(r.year), String(r.year));
      if (d === "code") for (const c of new Set(codes(r))) bump(c, c);
      if (d === "confirmed") bump(r.confirmed ? "true" : "false", r.confirmed ? "Fix confirmed" : "Not confirmed");
    }
    const list = [...counts].map(([value, c]) => ({ value, label: c.label, count: c.count }));
    if (d === "year") list.sort((a, b) => Number(b.value) - Number(a.value));
    else if (d === "confirmed") list.sort((a, b) => (a.value === "true" ? -1 : 1) - (b.value === "true" ? -1 : 1));
    else list.sort((a, b) => b.count - a.count || a.label.localeCompare(b.label));
    facets[d] = list;
  }
  const relevance = phrases.length > 0 && q.sort !== "recent";
  const ranked = relevance ? result.filter((r) => score.has(r.doc_id)) : [];
  if (ranked.length < result.length) complete = false;
  const rest = relevance ? result.filter((r) => !score.has(r.doc_id)) : result;
  const ordered = [
    ...ranked.sort((a, b) => score.get(a.doc_id)! - score.get(b.doc_id)! || b.doc_id - a.doc_id),
    ...[...rest].sort((a, b) => b.doc_id - a.doc_id),
  ];
  const size = q.pageSize ?? 20;
  const page = ordered.slice(((q.page ?? 1) - 1) * size, (q.page ?? 1) * size);
  return { total: result.length, facets, page, score, relevance, ranked: ranked.length, complete };
}

function randomQuery(rng: ReturnType<typeof createRng>): CasebookSearchQuery {
  const words = [
    "coil",
    "misfire",
    "misfiring",
    "replace",
    "sensor",
    "burn",
    "crank",
    "plug",
    "injector",
    "leak",
    "spark line",
    "coil boot",
    "rep",
    "mis",
    "co",
    "p0303",
    "veltra",
    "check the",
    "after long",
    "valve cylinder",
    "zzzz",
    "",
  ];
  const q: CasebookSearchQuery = {
    q: rng.pick(words),
    sort: rng.next() < 0.7 ? "relevance" : "recent",
    page: rng.int(1, 3),
    pageSize: rng.pick([5, 10, 20]),
  };
  const make = rng.pick(Object.keys(CASEBOOK_MAKES));
  if (rng.next() < 0.3) q.make = rng.next() < 0.5 ? make : make.toUpperCase();
  if (rng.next() < 0.15) q.model = rng.pick(CASEBOOK_MAKES[make]);
  if (rng.next() < 0.25) {
    q.yearFrom = rng.int(1998, 2020);
    if (rng.next() < 0.6) q.yearTo = q.yearFrom + rng.int(0, 8);
  }
  if (rng.next() < 0.2) q.engine = rng.pick(CASEBOOK_ENGINES);
  if (rng.next() < 0.3) q.system = rng.pick(["ignition", "fuel", "sensors", "starting-charging", "engine-mechanical"]);
  if (rng.next() < 0.2) q.code = rng.pick(["P0300", "P0303", "P0171", "P0335", "P0562", "P0999"]);
  if (rng.next() < 0.2) q.confirmed = rng.next() < 0.7;
  return q;
}

describe("casebook search engine vs a brute-force reference", () => {
  it("agrees on totals, facet counts, order and pages for 200 generated searches", async () => {
    const rng = createRng(2024);
    let nonEmpty = 0;
    let filtered = 0;
    for (let i = 0; i < 200; i++) {
      const q = randomQuery(rng);
      const got = await engine.search(q);
      const ref = reference(q);
      const label = JSON.stringify(q);
      expect(got.total, label).toBe(ref.total);
      expect(got.facets, label).toEqual(ref.facets);
      expect(
        got.results.map((r) => r.id),
        label,
      ).toEqual(ref.page.map((r) => r.id));
      if (ref.relevance && ref.total > 0 && got.results.length) {
        expect(got.ranking, label).toEqual({ method: "bm25", candidates: ref.ranked, exact: ref.complete });
        got.results.forEach((r, k) => {
          const s = ref.score.get(ref.page[k].doc_id);
          if (s === undefined) expect(r.score, label).toBeNull();
          else expect(r.score!, label).toBeCloseTo(-s, 4);
        });
      }
      if (ref.total > 0) nonEmpty++;
      if (q.make || q.model || q.yearFrom || q.engine || q.system || q.code || q.confirmed !== undefined) filtered++;
    }
    // the generated mix exercised what it should
    expect(nonEmpty).toBeGreaterThan(80);
    expect(filtered).toBeGreaterThan(100);
  });

  it("beyond the ranked window: bm25 over the newest results, then the older ones newest first, each once", async () => {
    const small = new CasebookSearchEngine(sqlite, { rankWindow: 25 });
    const ref = reference({ q: "coil", pageSize: 1000 });
    expect(ref.total).toBeGreaterThan(40);
    const pages: string[] = [];
    let first: Awaited<ReturnType<CasebookSearchEngine["search"]>> | null = null;
    for (let p = 1; p <= Math.ceil(ref.total / 10); p++) {
      const r = await small.search({ q: "coil", page: p, pageSize: 10 });
      if (p === 1) first = r;
      expect(r.total).toBe(ref.total);
      pages.push(...r.results.map((x) => x.id));
    }
    expect(first!.ranking).toEqual({ method: "bm25", candidates: 25, exact: false });
    // the newest 25 results, in bm25 order; then the rest, newest first
    const byDoc = [...ref.page].sort((a, b) => b.doc_id - a.doc_id);
    const newest = byDoc
      .slice(0, 25)
      .sort((a, b) => ref.score.get(a.doc_id)! - ref.score.get(b.doc_id)! || b.doc_id - a.doc_id);
    expect(pages).toEqual([...newest, ...byDoc.slice(25)].map((r) => r.id));
    expect(RANK_WINDOW).toBeGreaterThan(300); // so the 200 searches above were all ranked in full
  });

  it("leaves words found in more than half of the entries out of bm25 (FTS5 gives them its idf floor) and orders by recency when nothing is left", async () => {
    // SQLite's fts5_aux.c: idf = log((N − n + 0.5) / (n + 0.5)), and 1e-6 when that is ≤ 0
    const e = new CasebookSearchEngine(sqlite, { commonDocs: 10 });
    const every = await e.search({ q: "recapture", pageSize: 100 }); // in every entry's tests-to-confirm
    expect(every.total).toBe(300);
    expect(every.ranking).toEqual({ method: "recent", candidates: 300, exact: false });
    const docIds = rows()
      .sort((a, b) => b.doc_id - a.doc_id)
      .map((r) => r.id);
    expect(every.results.map((r) => r.id)).toEqual(docIds.slice(0, 100));
    // with a rarer word beside it, the order is bm25's over the rarer word alone
    const both = await e.search({ q: "recapture boot", pageSize: 100 });
    const alone = await new CasebookSearchEngine(sqlite).search({ q: "boot", pageSize: 100 });
    expect(both.total).toBe(alone.total);
    expect(both.results.map((r) => r.id)).toEqual(alone.results.map((r) => r.id));
  });

  it("matches whole words and prefixes as typed, on words whose porter stem is the word itself", async () => {
    // "coil", "boot" and "crank" end in no suffix of Porter's (1980) rules, so the raw word check is the reference
    const all = sqlite
      .prepare("SELECT doc_id, vehicle, complaint, symptoms, codes, diagnosis, root_cause, fix FROM casebook_entry")
      .all() as Record<string, string | number>[];
    const words = (r: Record<string, string | number>) =>
      new Set(
        Object.entries(r)
          .filter(([k]) => k !== "doc_id")
          .flatMap(
            ([, v]) =>
              String(v)
                .toLowerCase()
                .match(/[\p{L}\p{N}]+/gu) ?? [],
          ),
      );
    for (const w of ["coil", "boot", "crank"]) {
      const expected = all.filter((r) => words(r).has(w)).length;
      expect((await engine.search({ q: `${w} ` })).total).toBeGreaterThan(0);
      // the last word is a prefix: "coil" also finds "coils" (none in the corpus) — count with the prefix rule
      const withPrefix = all.filter((r) => [...words(r)].some((x) => x.startsWith(w))).length;
      expect((await engine.search({ q: w })).total, w).toBe(withPrefix);
      expect(withPrefix).toBeGreaterThanOrEqual(expected);
    }
  });

  it("never passes the user's text to MATCH raw: operators and quotes are words", async () => {
    for (const q of [
      'coil" OR "x',
      "coil OR zzzz",
      "coil NOT boot",
      "NEAR(coil boot)",
      "{fix}: coil",
      "coil*",
      "-coil",
      "^coil",
      "coil AND",
      '"',
      "*",
      "(",
      "a:b",
    ]) {
      await expect(engine.search({ q }), q).resolves.toBeDefined();
    }
    // "OR" is a word here, not the FTS5 operator: coil OR zzzz needs all three words
    expect((await engine.search({ q: "coil OR zzzz" })).total).toBe(0);
    expect((await engine.search({ q: "coil NOT boot" })).total).toBe(0);
    expect((await engine.search({ q: '"' })).total).toBe((await engine.search({})).total); // no words: everything
  });

  it("stays in step with edits, hiding and unhiding (the phrase cache is patched)", async () => {
    const before = (await engine.search({ q: "coil" })).total;
    const target = (await engine.search({ q: "coil" })).results[0].id;
    const rev = () => (sqlite.prepare("SELECT max(rev) FROM casebook_entry").pluck().get() as number) + 1;
    sqlite.prepare("UPDATE casebook_entry SET hidden = 1, rev = ? WHERE id = ?").run(rev(), target);
    expect((await engine.search({ q: "coil" })).total).toBe(before - 1);
    expect((await engine.search({ q: "coil" })).results.map((r) => r.id)).not.toContain(target);
    sqlite
      .prepare("UPDATE casebook_entry SET hidden = 0, fix = 'Replaced the quixotic harness', rev = ? WHERE id = ?")
      .run(rev(), target);
    expect((await engine.search({ q: "quixotic" })).results.map((r) => r.id)).toEqual([target]);
    expect((await engine.search({ q: "coil" })).total).toBe(reference({ q: "coil" }).total);
    // many changes at once: the cache is dropped and rebuilt
    const ids = rows()
      .slice(0, 150)
      .map((r) => r.id);
    const up = sqlite.prepare("UPDATE casebook_entry SET hidden = 1, rev = ? WHERE id = ?");
    sqlite.transaction(() => ids.forEach((id) => up.run(rev(), id)))();
    expect((await engine.search({ q: "coil" })).total).toBe(reference({ q: "coil" }).total);
    expect((await engine.search({})).total).toBe(150);
    const un = sqlite.prepare("UPDATE casebook_entry SET hidden = 0, rev = ? WHERE id = ?");
    sqlite.transaction(() => ids.forEach((id) => un.run(rev(), id)))();
    expect((await engine.search({})).total).toBe(300);
    sqlite.prepare("INSERT INTO casebook_fts(casebook_fts, rank) VALUES ('integrity-check', 1)").run();
  });
});
