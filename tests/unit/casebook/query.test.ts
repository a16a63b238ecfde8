/**
 * The user's words → FTS5 phrases, and the facet tokens of the tags column.
 * Reference for the tokenizer behaviour: SQLite's FTS5 documentation (sqlite.org/fts5.html,
 * §3.1 "FTS5 strings", §3.3 prefix queries, §4.3.1 unicode61, §4.3.3 porter) — a string in double
 * quotes is a phrase whatever it contains; "*" after it makes a prefix query.
 */
import { describe, expect, it } from "vitest";
import Database from "better-sqlite3";
import {
  contentMatch,
  facetTag,
  facetTags,
  queryPhrases,
  queryTokens,
} from "../../../server/services/casebook-search-engine";

describe("query text", () => {
  it("quotes every word, lower-cased; the last one (2+ characters) becomes a prefix", () => {
    expect(queryPhrases("Coil boot")).toEqual(['"coil"', '"boot"*']);
    expect(queryPhrases("  misfire  ")).toEqual(['"misfire"*']);
    expect(queryPhrases("cyl 3")).toEqual(['"cyl"', '"3"']);
    expect(queryPhrases("")).toEqual([]);
    expect(queryPhrases('"; DROP TABLE x; --')).toEqual(['"drop"', '"table"', '"x"']);
    expect(queryPhrases("a OR b NOT c NEAR(d)")).toEqual(['"a"', '"or"', '"b"', '"not"', '"c"', '"near"', '"d"']);
    expect(queryTokens("Zündspule défaut")).toEqual(["zündspule", "défaut"]);
    expect(queryPhrases(Array.from({ length: 30 }, (_, i) => `w${i}`).join(" "))).toHaveLength(12);
  });

  it("restricts the phrases to the content columns", () => {
    expect(contentMatch(['"coil"', '"boot"*'])).toBe(
      '{vehicle complaint symptoms codes diagnosis root_cause fix} : ("coil" "boot"*)',
    );
  });
});

describe("facet tokens", () => {
  it("are single unicode61 tokens that the porter stemmer leaves as written", () => {
    const db = new Database(":memory:");
    db.exec(
      "CREATE VIRTUAL TABLE t USING fts5(x, tokenize='porter unicode61'); CREATE VIRTUAL TABLE v USING fts5vocab(t, 'row');",
    );
    const tags = facetTags({
      make: "Veltra",
      model: "Quillon ST",
      year: 2016,
      engine: "2.0 I4 turbo",
      system: "ignition",
      codes: ["P0303", "p0351"],
      confirmed: true,
    });
    db.prepare("INSERT INTO t(x) VALUES (?)").run(tags);
    const terms = db.prepare("SELECT term FROM v ORDER BY term").pluck().all();
    expect(terms).toEqual(tags.split(" ").sort());
    expect(facetTag("make", " VELTRA ")).toBe(facetTag("make", "veltra"));
    expect(facetTag("code", "p0303")).toBe(facetTag("code", "P0303"));
    expect(facetTag("confirmed", false)).toBe("xcfnq");
    expect(facetTag("make", "")).toBeNull();
  });
});
