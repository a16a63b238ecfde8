/**
 * The casebook end to end: a real case (VIN, complaint, four coil-on-plug captures) goes through
 * payment, claim, answer and the shop's confirmation; the answers service's case-resolved hook
 * publishes it. Then: found by a word of its diagnosis (also a stemmed form), by its code and by
 * its make; nothing private survives (planted e-mail addresses, phone numbers, the shop's and the
 * people's names, the VIN serial — searched for in the whole stored row and in the FTS index);
 * read-only traces for a reader from another shop; votes and views; moderation with the index in
 * step; the expert's record; similar cases for a new case with the same pattern.
 *
 * Outside references:
 * - VIN 1M8GDM9AXKP042788: the worked check-digit example of 49 CFR 565.15 as reproduced in the
 *   trade reference (Wikipedia, "Vehicle identification number"); serial = positions 12–17
 *   ("042788"), model part = positions 1–8, 10, 11 (49 CFR 565.15(b)–(d)).
 * - Planted e-mail domains are reserved for examples and tests (RFC 2606: example.com, .test).
 * - Planted phone numbers are ones reserved for fiction: NANP 555-0100…0199 (North American
 *   Numbering Plan Administrator) and Ofcom's drama ranges 020 7946 0000–0999 and 07700 900000–900999.
 * - Porter (1980), "An algorithm for suffix stripping": "misfiring" and "misfire" share the stem "misfir".
 * - Similar-case truth: the generator's burn times (0.6 ms on coil 4 against 1.5 ms), see
 *   demo/generators/secondary.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq, sql } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import {
  createAdmin,
  createExpert,
  createShopTeam,
  signIn,
  type CreatedExpert,
  type CreatedUser,
  type ShopTeam,
  type SignedInAgent,
} from "../factories";
import { submitAndPay } from "../helpers/queue-flow";
import { generateSecondary } from "../../demo/generators/secondary";
import { renderCsv } from "../../demo/generators/csv";
import { schema } from "../../server/db/client";
import { stopCasebookSearch } from "../../server/services/casebook-search";
import { SNIPPET_CLOSE, SNIPPET_OPEN } from "../../shared/schemas/casebook";

let server: TestServer;
let expert: CreatedExpert;
let team: ShopTeam;
let other: ShopTeam;
let admin: CreatedUser;
let tech: SignedInAgent;
let owner: SignedInAgent;
let e: SignedInAgent;
let otherTech: SignedInAgent;
let adminAgent: SignedInAgent;
let caseId: string;
let entryId: string;
const traceIds: string[] = [];

const VIN = "1M8GDM9AXKP042788";
const SHOP_NAME = "Quarrymoor Ignition Works";
const TECH_NAME = "Dana Whitlock";
const OWNER_NAME = "Oskar Brandtner";
const EXPERT_NAME = "Ines Falkenrath";
const PLANTED = {
  emails: ["dana.whitlock@example.com", "owner@quarrymoor.test", "ines.f@example.com"],
  phones: ["202-555-0143", "(202) 555-0178", "+44 20 7946 0958", "07700 900123"],
};

async function uploadTrace(agent: SignedInAgent, id: string, coil: number, burnTimeMs: number, seed: number) {
  const g = generateSecondary({ seed, sampleRateHz: 200_000, events: 3, burnTimeMs });
  const res = await agent
    .post(`/api/cases/${id}/traces`)
    .field("settings", JSON.stringify({ ...g.settings, coil, cylinder: coil }))
    .attach("file", Buffer.from(renderCsv(g.trace, { timeUnit: "ms" })), {
      filename: `${TECH_NAME} coil ${coil}.csv`,
      contentType: "text/csv",
    });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body as { id: string; analysis: { summary: { burnTimeMs: { median: number } } } };
}

async function newCase(agent: SignedInAgent, body: Record<string, unknown>): Promise<string> {
  const res = await agent.post("/api/cases").send(body);
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body.id;
}

beforeAll(async () => {
  server = await startTestServer();
  expert = await createExpert(server, {
    name: EXPERT_NAME,
    email: `ines.f.${Date.now()}@example.com`,
    systems: ["ignition"],
    maxOpenCases: 20,
  });
  team = await createShopTeam(server, {
    name: SHOP_NAME,
    technicians: 1,
    owner: { name: OWNER_NAME },
    technician: { name: TECH_NAME },
  });
  other = await createShopTeam(server, { technicians: 1 });
  admin = await createAdmin(server);
  tech = await signIn(server, team.technicians[0]);
  owner = await signIn(server, team.owner);
  e = await signIn(server, expert);
  otherTech = await signIn(server, other.technicians[0]);
  adminAgent = await signIn(server, admin);

  caseId = await newCase(tech, {
    vehicle: {
      vin: VIN,
      year: 2019,
      make: "Veltra",
      model: "Quillon",
      engine: "2.0 I4 turbo",
      mileage: 84_321,
      mileageUnit: "km",
    },
    complaint: `Misfire under load on the motorway. Customer Mrs Feldhaus (call ${PLANTED.phones[0]} or ${PLANTED.phones[2]}) says it started after a wash. Ask ${TECH_NAME} at ${SHOP_NAME}, ${PLANTED.emails[0]}.`,
    codes: ["P0304"],
    system: "ignition",
    symptoms: ["misfire", "check-engine-light-flashing"],
    testsDone: `Swapped coils 3 and 4 — the misfire followed coil 4. VIN ${VIN} checked by Oskar. Owner's mobile ${PLANTED.phones[3]}.`,
    partsReplaced: "Spark plugs (new, gapped to spec)",
    notes: "Private note: customer owes us for the last job.",
  });
  for (const coil of [1, 2, 3, 4])
    traceIds.push((await uploadTrace(tech, caseId, coil, coil === 4 ? 0.6 : 1.5, 40 + coil)).id);
  await submitAndPay(server, tech, caseId);
  expect((await e.post(`/api/cases/${caseId}/claim`)).status).toBe(200);
  // the expert's mark on coil 4 (marks are made over the live socket; written here directly)
  const now = new Date();
  await server.ctx.db.write((tx) =>
    tx
      .insert(schema.annotation)
      .values({
        id: crypto.randomUUID(),
        caseId,
        traceId: traceIds[3],
        authorId: expert.id,
        kind: "span",
        t0: 0.001,
        t1: 0.0016,
        label: `Short burn here — ${EXPERT_NAME}, ${PLANTED.phones[1]}`,
        color: "#c0392b",
        seq: 9001,
        createdAt: now,
        updatedAt: now,
      })
      .run(),
  );
  const answer = await e.post(`/api/cases/${caseId}/answer`).send({
    diagnosis: `Coil 4 burn time is 0.6 ms against 1.5 ms on the others with a steep spark line: the coil's secondary winding is breaking down and misfiring under load. ${TECH_NAME}, ring me on ${PLANTED.phones[1]} if unsure. ${EXPERT_NAME}`,
    rootCause: "Coil 4 secondary winding insulation breakdown (internal arcing).",
    recommendedFix: `Replace ignition coil 4; inspect the plug well for water after the wash. Questions: ${PLANTED.emails[2]}.`,
    testsToConfirm:
      "Recapture secondary on coil 4 at idle and at 2500 rpm under load; burn time should match the other coils (about 1.5 ms).",
  });
  expect(answer.status, JSON.stringify(answer.body)).toBe(201);
  const conf = await tech
    .post(`/api/cases/${caseId}/confirm`)
    .send({ fixed: true, rating: 5, note: `New coil fitted by ${TECH_NAME}; misfire gone. ${PLANTED.emails[1]}` });
  expect(conf.status, JSON.stringify(conf.body)).toBe(200);
  expect(conf.body.outcome).toBe("resolved");
  const row = await server.ctx.db.read((tx) =>
    tx.select().from(schema.casebookEntry).where(eq(schema.casebookEntry.caseId, caseId)).get(),
  );
  expect(row, "the case-resolved hook published the case").toBeTruthy();
  entryId = row!.id;
}, 120_000);

afterAll(async () => {
  if (server) await stopCasebookSearch(server.ctx);
  await server?.close();
});

const search = (agent: SignedInAgent, params: Record<string, string>) =>
  agent.get("/api/casebook/search").query(params);

describe("publishing and search", () => {
  it("finds the resolved case by a word of its diagnosis, a stemmed form, its code and its make", async () => {
    for (const q of [
      "breakdown",
      "winding",
      "misfiring",
      "misfire",
      "misfires",
      "P0304",
      "Veltra",
      "veltra quillon",
      "insul",
    ]) {
      const res = await search(otherTech, { q });
      expect(res.status, q).toBe(200);
      expect(
        res.body.results.map((r: { id: string }) => r.id),
        q,
      ).toContain(entryId);
    }
    const byCode = await search(otherTech, { code: "P0304" });
    expect(byCode.body.results.map((r: { id: string }) => r.id)).toEqual([entryId]);
    const byMake = await search(otherTech, { make: "veltra" });
    expect(byMake.body.total).toBe(1);
    expect(byMake.body.facets.make).toEqual([{ value: "veltra", label: "Veltra", count: 1 }]);
    expect((await search(otherTech, { q: "camshaft" })).body.total).toBe(0);
    expect((await search(otherTech, { make: "Korrin" })).body.total).toBe(0);
  });

  it("answers the documented shape, with a highlighted snippet and the safety caution on the entry", async () => {
    const res = await search(otherTech, { q: "winding" });
    expect(Object.keys(res.body)).toEqual(expect.arrayContaining(["total", "results", "facets"]));
    const hit = res.body.results[0];
    expect(Object.keys(hit)).toEqual(
      expect.arrayContaining(["id", "title", "vehicle", "codes", "rootCause", "snippet", "score"]),
    );
    expect(hit.codes).toEqual(["P0304"]);
    expect(hit.snippet).toContain(`${SNIPPET_OPEN}winding${SNIPPET_CLOSE}`);
    expect(hit.title).toMatch(/^2019 Veltra Quillon 2\.0 I4 turbo: Coil 4 secondary winding insulation breakdown/);
    const entry = await otherTech.get(`/api/casebook/${entryId}`);
    expect(entry.status).toBe(200);
    expect(entry.body.safetyNote).toMatch(/tens of kilovolts/);
    expect(entry.body.safetyNote).toMatch(/manufacturer's procedure, local codes and licensed practice/);
    expect(entry.body.answer.rootCause).toMatch(/insulation breakdown/);
    expect(entry.body.outcome).toMatchObject({ confirmed: true, rating: 5 });
    expect(entry.body.vehicle).toMatchObject({
      year: 2019,
      make: "Veltra",
      model: "Quillon",
      mileage: 84_000,
      vinModel: "1M8GDM9A*KP******",
    });
    expect(entry.body.traces).toHaveLength(4);
    expect(entry.body.annotations).toEqual([
      expect.objectContaining({
        traceId: traceIds[3],
        kind: "span",
        t0: 0.001,
        t1: 0.0016,
        label: "Short burn here — [name], [phone]",
      }),
    ]);
    expect(
      entry.body.comparison.outliers.map((o: { traceId: string; metric: string }) => [o.traceId, o.metric]),
    ).toContainEqual([traceIds[3], "burnTimeMs"]);
  });

  it("keeps nothing private: planted addresses, numbers, names, the shop and the VIN serial are gone from the stored entry and the index", async () => {
    const db = server.ctx.db;
    const row = (await db.read((tx) =>
      tx.select().from(schema.casebookEntry).where(eq(schema.casebookEntry.id, entryId)).get(),
    ))!;
    const vec = await db.read((tx) =>
      tx.select().from(schema.casebookVector).where(eq(schema.casebookVector.entryId, entryId)).get(),
    );
    // case_id and expert_id are the desk's links back (the expert's record, the case's own panel);
    // they are checked separately below: never in what a reader receives
    const stored = JSON.stringify({ ...row, caseId: null, expertId: null }) + JSON.stringify(vec?.pattern ?? {});
    const served =
      JSON.stringify((await otherTech.get(`/api/casebook/${entryId}`)).body) +
      JSON.stringify((await search(otherTech, { q: "winding" })).body);
    for (const id of [caseId, expert.id, team.shop.id, team.technicians[0].id, team.owner.id])
      expect(served, "a link back in the response").not.toContain(id);
    const planted = [
      ...PLANTED.emails,
      ...PLANTED.phones,
      "555-0143",
      "555-0178",
      "7946 0958",
      "900123",
      SHOP_NAME,
      "Quarrymoor",
      TECH_NAME,
      "Whitlock",
      "Dana",
      OWNER_NAME,
      "Oskar",
      "Brandtner",
      EXPERT_NAME,
      "Falkenrath",
      "Ines",
      "Feldhaus",
      "owes us",
      VIN,
      "042788",
      team.technicians[0].email,
      team.owner.email,
      expert.email,
      team.shop.id,
      team.technicians[0].id,
      expert.id,
    ];
    for (const p of planted) {
      expect(stored.toLowerCase(), `"${p}" in the stored entry`).not.toContain(p.toLowerCase());
      expect(served.toLowerCase(), `"${p}" in the response`).not.toContain(p.toLowerCase());
    }
    // the trace names were the uploads' file names (with the tech's name): replaced
    expect((row.body as { traces: { name: string }[] }).traces.map((t) => t.name)).toEqual(
      [1, 2, 3, 4].map((n) => `Coil ${n} · secondary ignition`),
    );
    // the words of the index (fts5vocab lists every token FTS5 stored)
    // (beside the index in its own database and dropped again: the libSQL server refuses temp. tables)
    const vocab = await db.write(async (tx) => {
      await tx.run(sql`CREATE VIRTUAL TABLE IF NOT EXISTS casebook_vocab USING fts5vocab(casebook_fts, 'row')`);
      const rows = await tx.all<{ term: string }>(sql`SELECT term FROM casebook_vocab`);
      await tx.run(sql`DROP TABLE casebook_vocab`);
      return rows;
    });
    const terms = new Set(vocab.map((r) => r.term));
    for (const w of [
      "quarrymoor",
      "whitlock",
      "dana",
      "oskar",
      "brandtner",
      "falkenrath",
      "ine",
      "ines",
      "feldhau",
      "feldhaus",
      "042788",
      "0143",
      "0178",
      "0958",
      "900123",
      "7946",
    ]) {
      expect(terms.has(w), `index term "${w}"`).toBe(false);
    }
    expect(terms.has("wind")).toBe(true); // porter: "winding" → "wind" (Porter 1980, step 1b)
    // the model part of the VIN stays searchable
    expect(terms.has("1m8gdm9a")).toBe(true);
  });
});

describe("read-only traces", () => {
  it("another shop's reader gets the published traces' windows, never the case, the trace record or the original", async () => {
    expect((await otherTech.get(`/api/cases/${caseId}`)).status).toBe(404);
    expect((await otherTech.get(`/api/traces/${traceIds[0]}`)).status).toBe(404);
    expect((await otherTech.get(`/api/traces/${traceIds[0]}/original`)).status).toBe(404);
    const w = await otherTech.get(`/api/traces/${traceIds[3]}/window?width=400`);
    expect(w.status).toBe(200);
    const own = await tech.get(`/api/traces/${traceIds[3]}/window?width=400`);
    expect(own.status).toBe(200);
    expect(w.body).toEqual(own.body);
    const viaEntry = await otherTech.get(`/api/casebook/${entryId}/traces/${traceIds[3]}/window?width=400`);
    expect(viaEntry.status).toBe(200);
    expect(viaEntry.body).toEqual(own.body);
    expect((await otherTech.get(`/api/casebook/${entryId}/traces/not-a-trace/window`)).status).toBe(404);
  });
});

describe("votes and views", () => {
  it("counts one helpful vote per user and distinct readers; the author may not vote", async () => {
    const before = (await otherTech.get(`/api/casebook/${entryId}`)).body.viewCount;
    await otherTech.get(`/api/casebook/${entryId}`);
    expect((await otherTech.get(`/api/casebook/${entryId}`)).body.viewCount).toBe(before);
    await owner.get(`/api/casebook/${entryId}`);
    expect((await owner.get(`/api/casebook/${entryId}`)).body.viewCount).toBe(before + 1);

    const v1 = await otherTech.post(`/api/casebook/${entryId}/vote`).send({ helpful: true });
    expect(v1.body).toEqual({ helpfulCount: 1, voted: true });
    const v2 = await otherTech.post(`/api/casebook/${entryId}/vote`).send({ helpful: true });
    expect(v2.body).toEqual({ helpfulCount: 1, voted: true });
    expect((await owner.post(`/api/casebook/${entryId}/vote`).send({})).body).toEqual({ helpfulCount: 2, voted: true });
    expect((await e.post(`/api/casebook/${entryId}/vote`).send({ helpful: true })).status).toBe(403);
    expect((await owner.post(`/api/casebook/${entryId}/vote`).send({ helpful: false })).body).toEqual({
      helpfulCount: 1,
      voted: false,
    });
    const read = (await otherTech.get(`/api/casebook/${entryId}`)).body;
    expect(read).toMatchObject({ helpfulCount: 1, voted: true, abilities: { vote: true, moderate: false } });
    const hit = (await search(otherTech, { q: "winding" })).body.results[0];
    expect(hit.helpfulCount).toBe(1);
  });

  it("shows the expert's record: entries, confirmed ones, helpful votes", async () => {
    const rec = await otherTech.get(`/api/experts/${expert.id}/record`);
    expect(rec.status).toBe(200);
    expect(rec.body).toMatchObject({ expertId: expert.id, entries: 1, confirmed: 1, helpfulVotes: 1 });
    expect(rec.body.entryIds).toBeUndefined();
    expect((await e.get(`/api/experts/${expert.id}/record`)).body.entryIds).toEqual([entryId]);
    expect((await otherTech.get(`/api/experts/${other.technicians[0].id}/record`)).status).toBe(404);
  });
});

describe("moderation", () => {
  it("hides and edits an entry with the index in step", async () => {
    expect((await otherTech.patch(`/api/admin/casebook/${entryId}`).send({ hidden: true })).status).toBe(403);
    expect((await search(otherTech, { q: "steep" })).body.total).toBe(1); // a word only the first diagnosis has
    const hide = await adminAgent
      .patch(`/api/admin/casebook/${entryId}`)
      .send({ hidden: true, hiddenReason: "checking a detail" });
    expect(hide.status, JSON.stringify(hide.body)).toBe(200);
    expect(hide.body).toMatchObject({ hidden: true, hiddenReason: "checking a detail" });
    expect((await search(otherTech, { q: "winding" })).body.total).toBe(0);
    expect((await search(otherTech, {})).body.results.map((r: { id: string }) => r.id)).not.toContain(entryId);
    expect((await otherTech.get(`/api/casebook/${entryId}`)).status).toBe(404);
    expect((await otherTech.get(`/api/traces/${traceIds[3]}/window`)).status).toBe(404);
    expect((await adminAgent.get("/api/admin/casebook/hidden")).body.items.map((i: { id: string }) => i.id)).toContain(
      entryId,
    );

    const edit = await adminAgent.patch(`/api/admin/casebook/${entryId}`).send({
      hidden: false,
      diagnosis: "Coil 4 secondary arcing to the plug well; water ingress after a pressure wash.",
    });
    expect(edit.status).toBe(200);
    expect((await search(otherTech, { q: "steep" })).body.total).toBe(0); // the old diagnosis left the index
    expect((await search(otherTech, { q: "winding" })).body.total).toBe(1); // still in the root cause
    expect((await search(otherTech, { q: "ingress" })).body.results.map((r: { id: string }) => r.id)).toEqual([
      entryId,
    ]);
    expect((await search(otherTech, { q: "pressure wash" })).body.total).toBe(1);
    // FTS5's own check: the index equals its content (the visible entries)
    await server.ctx.db.write((tx) =>
      tx.run(sql`INSERT INTO casebook_fts(casebook_fts, rank) VALUES ('integrity-check', 1)`),
    );
  });
});

describe("similar cases", () => {
  it("offers the published case first to a new case with the same odd-coil pattern, with the reason in words", async () => {
    const id2 = await newCase(otherTech, {
      vehicle: { year: 2018, make: "Korrin", model: "Vale" },
      complaint: "Intermittent misfire",
      codes: ["P0302"],
      system: "ignition",
    });
    expect((await otherTech.get(`/api/cases/${id2}/similar`)).body).toMatchObject({
      results: [],
      note: expect.stringMatching(/Add a trace/),
    });
    for (const coil of [1, 2, 3, 4]) await uploadTrace(otherTech, id2, coil, coil === 2 ? 0.65 : 1.45, 70 + coil);
    const res = await otherTech.get(`/api/cases/${id2}/similar`);
    expect(res.status).toBe(200);
    expect(res.body.results[0].id).toBe(entryId);
    expect(res.body.results[0].reasons[0]).toMatch(
      /^coil 4 burn 0\.[56]\d? ms against 1\.[45]\d? ms on the others, like this case$/,
    );
    // the shop's own case does not offer its own entry
    expect(
      (await tech.get(`/api/cases/${caseId}/similar`)).body.results.map((r: { id: string }) => r.id),
    ).not.toContain(entryId);
    // another shop may not ask about this case
    expect((await otherTech.get(`/api/cases/${caseId}/similar`)).status).toBe(404);
  });
});
