import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { SQLiteTable } from "drizzle-orm/sqlite-core";
import request from "supertest";
import { eq, sql } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createAdmin, createExpert, createShopTeam, signIn, type SignedInAgent, type ShopTeam } from "../factories";
import { schema } from "../../server/db/client";

/**
 * VIN examples are the worked examples of /work/shared/trade-reference.md (49 CFR 565.15 and
 * 565.13, Tables III–V): 1M8GDM9AXKP042788 has check digit X (sum 351, mod 11 = 10 → X).
 */
const VALID_VIN = "1M8GDM9AXKP042788";
/** Same VIN with position 9 changed to 1: the check digit no longer matches (49 CFR 565.15). */
const WRONG_CHECK_VIN = "1M8GDM9A1KP042788";

let server: TestServer;
let shopA: ShopTeam;
let shopB: ShopTeam;
let techA: SignedInAgent;
let ownerA: SignedInAgent;
let techB: SignedInAgent;
let ownerB: SignedInAgent;
let expert: SignedInAgent;
let expertId: string;
let admin: SignedInAgent;

const draft = (over: Record<string, unknown> = {}) => ({
  vehicle: {
    vin: VALID_VIN.toLowerCase(),
    year: 1989,
    make: "Veltra",
    model: "Sorrel",
    engine: "2.0 I4",
    mileage: 84210,
    mileageUnit: "km",
  },
  complaint: "Intermittent misfire under load when warm",
  codes: ["p0304", "P0171"],
  system: "ignition",
  symptoms: ["misfire"],
  ...over,
});

const count = async (table: SQLiteTable) =>
  (await server.ctx.db.read((tx) =>
    tx
      .select({ n: sql<number>`count(*)` })
      .from(table)
      .get(),
  ))!.n;

beforeAll(async () => {
  server = await startTestServer();
  shopA = await createShopTeam(server);
  shopB = await createShopTeam(server);
  techA = await signIn(server, shopA.technicians[0]);
  ownerA = await signIn(server, shopA.owner);
  techB = await signIn(server, shopB.technicians[0]);
  ownerB = await signIn(server, shopB.owner);
  const e = await createExpert(server);
  expertId = e.id;
  expert = await signIn(server, e);
  admin = await signIn(server, await createAdmin(server));
});
afterAll(async () => {
  await server?.close();
});

describe("POST /api/cases", () => {
  it("creates a draft for the actor's shop with the VIN decoded and the codes described", async () => {
    const res = await techA.post("/api/cases").send(draft());
    expect(res.status).toBe(201);
    const c = res.body;
    expect(c.status).toBe("draft");
    expect(c.shopId).toBe(shopA.shop.id);
    expect(c.vehicle.vin).toBe(VALID_VIN); // normalized to capitals
    expect(c.vehicle).toMatchObject({ year: 1989, make: "Veltra", model: "Sorrel", mileage: 84210, mileageUnit: "km" });
    // 49 CFR 565.15: position 10 "K" with a digit in position 7 → the 1980–2009 cycle → 1989;
    // first character 1 → North America (WMI regions, from memory).
    expect(c.vinDecoded).toMatchObject({
      wmi: "1M8",
      region: "North America",
      modelYear: 1989,
      checkDigit: "X",
      checkDigitValid: true,
    });
    expect(c.vinWarnings).toEqual([]);
    // SAE J2012: P0304 is the generic cylinder-4 misfire code; P0171 is lean, bank 1.
    expect(c.codes.map((x: { code: unknown }) => x.code)).toEqual(["P0304", "P0171"]);
    expect(c.codes[0]).toMatchObject({ system: "powertrain", generic: true, misfireCylinder: 4 });
    expect(c.codes[0].description).toMatch(/4/);
    expect(c.codes[1].description).toMatch(/lean/i);
    expect(c.traces).toEqual([]);
    expect(c.photos).toEqual([]);
    expect(c.abilities).toEqual({
      read: true,
      edit: true,
      addTrace: true,
      deleteTrace: true,
      addPhoto: true,
      deletePhoto: true,
    });
    expect(c.readiness).toEqual({ complete: true, issues: [] });

    const row = (await server.ctx.db.read((tx) =>
      tx.select().from(schema.caseTable).where(eq(schema.caseTable.id, c.id)).get(),
    ))!;
    expect(row.createdBy).toBe(shopA.technicians[0].id);
    const events = await server.ctx.db.read((tx) =>
      tx.select().from(schema.caseEvent).where(eq(schema.caseEvent.caseId, c.id)).all(),
    );
    expect(events.map((e) => e.type)).toEqual(["created"]);
  });

  it("saves a draft at any point: an empty body is a draft that is not complete yet", async () => {
    const res = await ownerA.post("/api/cases").send({});
    expect(res.status).toBe(201);
    expect(res.body.status).toBe("draft");
    expect(res.body.readiness.complete).toBe(false);
    const paths = res.body.readiness.issues.map((i: { path: unknown }) => i.path);
    expect(paths).toEqual(expect.arrayContaining(["vehicle.make", "vehicle.model", "complaint", "system"]));
  });

  it("warns when the year typed differs from the VIN's model year", async () => {
    // 49 CFR 565.15: 1M8GDM9AXKP042788 has K in position 10 and a digit in position 7 → 1989.
    const res = await techA
      .post("/api/cases")
      .send(draft({ vehicle: { vin: VALID_VIN, year: 2019, make: "Veltra", model: "Sorrel" } }));
    expect(res.status).toBe(201);
    expect(res.body.vinWarnings).toEqual([expect.objectContaining({ code: "year-mismatch", expected: "1989" })]);
  });

  it("keeps a VIN whose check digit is wrong as a warning the tech can override", async () => {
    const res = await techA
      .post("/api/cases")
      .send(draft({ vehicle: { vin: WRONG_CHECK_VIN, make: "Korrin", model: "Vale" } }));
    expect(res.status).toBe(201);
    // 49 CFR 565.15: the other sixteen characters call for X in position 9.
    expect(res.body.vinWarnings).toEqual([expect.objectContaining({ code: "check-digit", expected: "X" })]);
    expect(res.body.vinDecoded.checkDigitValid).toBe(false);
    expect(res.body.readiness.complete).toBe(false);
    expect(res.body.readiness.issues.map((i: { path: unknown }) => i.path)).toContain("vehicle.vin");

    const fixed = await techA.patch(`/api/cases/${res.body.id}`).send({ vehicle: { vinCheckOverride: true } });
    expect(fixed.status).toBe(200);
    expect(fixed.body.vinWarnings).toEqual([]);
    expect(fixed.body.readiness.complete).toBe(true);
  });

  it.each([
    ["a VIN with the letter O (never used, 49 CFR 565.13)", { vehicle: { vin: "1M8GDM9AXKP04278O" } }, "vehicle.vin"],
    ["a VIN of 16 characters (49 CFR 565.15: 17)", { vehicle: { vin: "1M8GDM9AXKP04278" } }, "vehicle.vin"],
    ["a code that is not of the SAE J2012 form", { codes: ["P0304", "X1234"] }, "codes.1"],
    ["a model year out of range", { vehicle: { year: 1800 } }, "vehicle.year"],
    ["an unknown system", { system: "warp-drive" }, "system"],
    ["an unknown field", { colour: "red" }, ""],
  ])("refuses %s with 400, names the field, and saves nothing", async (_label, body, path) => {
    const casesBefore = await count(schema.caseTable);
    const eventsBefore = await count(schema.caseEvent);
    const res = await techA.post("/api/cases").send(body);
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("validation_failed");
    expect(res.body.error.details.fields.map((f: { path: unknown }) => f.path)).toContain(path);
    expect(await count(schema.caseTable)).toBe(casesBefore);
    expect(await count(schema.caseEvent)).toBe(eventsBefore);
  });

  it("answers 401 when signed out, 403 for experts and admins (only shops open cases)", async () => {
    const before = await count(schema.caseTable);
    expect((await request(server.url).post("/api/cases").send(draft())).status).toBe(401);
    expect((await expert.post("/api/cases").send(draft())).status).toBe(403);
    expect((await admin.post("/api/cases").send(draft())).status).toBe(403);
    expect(await count(schema.caseTable)).toBe(before);
  });
});

describe("PATCH /api/cases/:id", () => {
  it("merges a patch into a draft: absent keys unchanged, null clears, nested objects key by key", async () => {
    const created = (await techA.post("/api/cases").send(draft({ conditions: { temperature: "hot", load: ["load"] } })))
      .body;
    const res = await ownerA.patch(`/api/cases/${created.id}`).send({
      vehicle: { mileage: 90000, year: null },
      complaint: "Misfire only above 3000 rpm",
      conditions: { occurrence: "intermittent" },
    });
    expect(res.status).toBe(200);
    expect(res.body.vehicle).toMatchObject({
      vin: VALID_VIN,
      make: "Veltra",
      model: "Sorrel",
      mileage: 90000,
      year: null,
    });
    expect(res.body.complaint).toBe("Misfire only above 3000 rpm");
    expect(res.body.codes.map((c: { code: unknown }) => c.code)).toEqual(["P0304", "P0171"]);
    expect(res.body.conditions).toEqual({ temperature: "hot", load: ["load"], occurrence: "intermittent" });

    const ev = await techA.get(`/api/cases/${created.id}/events`);
    expect(ev.status).toBe(200);
    expect(ev.body.items.map((e: { type: unknown }) => e.type)).toEqual(["created", "edited"]);
    expect(ev.body.items[1].data.fields).toEqual(
      expect.arrayContaining(["mileage", "year", "complaint", "conditions"]),
    );
    expect(ev.body.items[1].actorId).toBe(shopA.owner.id);
  });

  it("refuses a patch with 400 and changes nothing", async () => {
    const created = (await techA.post("/api/cases").send(draft())).body;
    const res = await techA.patch(`/api/cases/${created.id}`).send({ complaint: "ok", vehicle: { vin: "SHORT" } });
    expect(res.status).toBe(400);
    expect(res.body.error.details.fields.map((f: { path: unknown }) => f.path)).toContain("vehicle.vin");
    const after = (await techA.get(`/api/cases/${created.id}`)).body;
    expect(after.complaint).toBe(created.complaint);
    expect(after.vehicle.vin).toBe(VALID_VIN);
  });

  it("edits only drafts: a submitted case answers 409 and is unchanged", async () => {
    const created = (await techA.post("/api/cases").send(draft())).body;
    await server.ctx.db.write((tx) =>
      tx.update(schema.caseTable).set({ status: "queued" }).where(eq(schema.caseTable.id, created.id)).run(),
    );
    const res = await techA.patch(`/api/cases/${created.id}`).send({ complaint: "changed after submission" });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe("case_locked");
    const after = (await techA.get(`/api/cases/${created.id}`)).body;
    expect(after.complaint).toBe(created.complaint);
    expect(after.abilities.edit).toBe(false);
    expect(after.abilities.addTrace).toBe(false);
  });
});

describe("GET /api/cases (the shop's list)", () => {
  let listServer: TestServer;
  let a: SignedInAgent;
  let b: SignedInAgent;
  const ids: Record<string, string> = {};

  beforeAll(async () => {
    listServer = await startTestServer();
    const ta = await createShopTeam(listServer);
    const tb = await createShopTeam(listServer);
    a = await signIn(listServer, ta.technicians[0]);
    b = await signIn(listServer, tb.owner);
    const mk = async (agent: SignedInAgent, key: string, body: Record<string, unknown>) => {
      const r = await agent.post("/api/cases").send(body);
      expect(r.status).toBe(201);
      ids[key] = r.body.id;
      // distinct creation times for a stable order
      await new Promise((r) => setTimeout(r, 5));
    };
    await mk(a, "veltra", {
      vehicle: { make: "Veltra", model: "Sorrel", year: 2016 },
      complaint: "Rough idle when cold",
      codes: ["P0301"],
      system: "ignition",
    });
    await mk(a, "korrin", {
      vehicle: { make: "Korrin", model: "Vale", year: 2021 },
      complaint: "No start after rain",
      codes: ["P0335"],
      system: "starting-charging",
    });
    await mk(a, "astaro", {
      vehicle: { make: "Astaro", model: "Bellweather", year: 2012 },
      complaint: "Hesitation on the motorway",
      codes: ["P0171", "P0304"],
      system: "fuel",
    });
    await mk(a, "percent", { vehicle: { make: "Astaro", model: "Dune" }, complaint: "Stalls at 50% throttle" });
    for (let i = 0; i < 3; i++)
      await mk(b, `other${i}`, {
        vehicle: { make: "Veltra", model: "Sorrel" },
        complaint: "Rough idle when cold",
        codes: ["P0301"],
      });
    await listServer.ctx.db.write((tx) =>
      tx.update(schema.caseTable).set({ status: "queued" }).where(eq(schema.caseTable.id, ids.korrin)).run(),
    );
  });
  afterAll(async () => {
    await listServer?.close();
  });

  const idsOf = (res: request.Response) => res.body.items.map((c: { id: unknown }) => c.id);

  it("lists only the actor's shop, newest first by default, with total and counts", async () => {
    const res = await a.get("/api/cases");
    expect(res.status).toBe(200);
    expect(res.body.total).toBe(4);
    expect(res.body.page).toBe(1);
    expect(res.body.pageSize).toBe(20);
    expect(idsOf(res)).toEqual([ids.percent, ids.astaro, ids.korrin, ids.veltra]);
    const astaro = res.body.items.find((c: { id: string }) => c.id === ids.astaro);
    expect(astaro).toMatchObject({ status: "draft", title: "2012 Astaro Bellweather", traceCount: 0, photoCount: 0 });
    expect(astaro.codes.map((c: { code: unknown }) => c.code)).toEqual(["P0171", "P0304"]);
    const other = await b.get("/api/cases");
    expect(other.body.total).toBe(3);
    expect(idsOf(other)).not.toContain(ids.veltra);
  });

  it("paginates", async () => {
    const p1 = await a.get("/api/cases?pageSize=3&page=1");
    const p2 = await a.get("/api/cases?pageSize=3&page=2");
    expect(p1.body.total).toBe(4);
    expect(idsOf(p1)).toEqual([ids.percent, ids.astaro, ids.korrin]);
    expect(idsOf(p2)).toEqual([ids.veltra]);
    const p3 = await a.get("/api/cases?pageSize=3&page=3");
    expect(p3.body.items).toEqual([]);
    expect(p3.body.total).toBe(4);
  });

  it("filters by status, by text over vehicle, complaint and codes, and by vehicle", async () => {
    expect(idsOf(await a.get("/api/cases?status=queued"))).toEqual([ids.korrin]);
    expect(idsOf(await a.get("/api/cases?status=draft")).sort()).toEqual([ids.veltra, ids.astaro, ids.percent].sort());
    expect(idsOf(await a.get("/api/cases?q=korrin"))).toEqual([ids.korrin]); // make, any case
    expect(idsOf(await a.get("/api/cases?q=motorway"))).toEqual([ids.astaro]); // complaint
    expect(idsOf(await a.get("/api/cases?q=p0304"))).toEqual([ids.astaro]); // trouble code
    expect(idsOf(await a.get("/api/cases?q=2016"))).toEqual([ids.veltra]); // year
    expect(idsOf(await a.get("/api/cases?q=astaro%20dune"))).toEqual([ids.percent]); // every word must match
    expect(idsOf(await a.get("/api/cases?q=50%25"))).toEqual([ids.percent]); // % is literal
    expect(idsOf(await a.get("/api/cases?q=5_%25"))).toEqual([]); // _ is literal too
    expect(idsOf(await a.get("/api/cases?vehicle=astaro")).sort()).toEqual([ids.astaro, ids.percent].sort());
    expect(idsOf(await a.get("/api/cases?vehicle=motorway"))).toEqual([]); // complaint is not vehicle
    expect(idsOf(await a.get("/api/cases?q=rough&status=draft"))).toEqual([ids.veltra]);
  });

  it("sorts by vehicle and year in either direction", async () => {
    expect(idsOf(await a.get("/api/cases?sort=vehicle&dir=asc"))).toEqual([
      ids.astaro,
      ids.percent,
      ids.korrin,
      ids.veltra,
    ]);
    expect(idsOf(await a.get("/api/cases?sort=vehicle&dir=desc"))).toEqual([
      ids.veltra,
      ids.korrin,
      ids.percent,
      ids.astaro,
    ]);
    // SQLite sorts NULL first ascending (sqlite.org/lang_select.html#orderby)
    expect(idsOf(await a.get("/api/cases?sort=year&dir=asc"))).toEqual([
      ids.percent,
      ids.astaro,
      ids.veltra,
      ids.korrin,
    ]);
  });

  it("refuses a bad query with 400 naming the parameter", async () => {
    for (const [qs, path] of [
      ["pageSize=1000", "pageSize"],
      ["page=0", "page"],
      ["status=lost", "status"],
      ["sort=colour", "sort"],
      ["dir=up", "dir"],
    ]) {
      const res = await a.get(`/api/cases?${qs}`);
      expect(res.status, qs).toBe(400);
      expect(res.body.error.details.fields.map((f: { path: unknown }) => f.path)).toContain(path);
    }
  });

  it("answers 401 when signed out", async () => {
    expect((await request(listServer.url).get("/api/cases")).status).toBe(401);
  });
});

describe("tenant isolation on the case routes", () => {
  let caseId: string;
  beforeAll(async () => {
    caseId = (await techA.post("/api/cases").send(draft())).body.id;
  });

  const routes = (id: string) => [
    { method: "get", path: `/api/cases/${id}` },
    { method: "patch", path: `/api/cases/${id}`, body: { complaint: "x" } },
    { method: "get", path: `/api/cases/${id}/events` },
    { method: "get", path: `/api/cases/${id}/comparison` },
  ];
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- a supertest agent called by the method's name
  const call = (agent: any, r: { method: string; path: string; body?: unknown }) => {
    const req = agent[r.method](r.path);
    return r.body ? req.send(r.body) : req;
  };

  it("another shop's technician and owner get 404 on every case route, and nothing changes", async () => {
    for (const who of [techB, ownerB]) {
      for (const r of routes(caseId)) {
        const res = await call(who, r);
        expect(res.status, `${r.method} ${r.path}`).toBe(404);
        expect(res.body.error.code).toBe("not_found");
      }
    }
    expect((await techA.get(`/api/cases/${caseId}`)).body.complaint).toBe(draft().complaint);
    expect((await techB.get("/api/cases")).body.items.map((c: { id: unknown }) => c.id)).not.toContain(caseId);
  });

  it("a signed-out request gets 401 on every case route", async () => {
    for (const r of routes(caseId)) {
      const res = await call(request(server.url), r);
      expect(res.status, `${r.method} ${r.path}`).toBe(401);
    }
  });

  it("an expert who has not claimed the case gets 404; once claimed they read it but cannot edit", async () => {
    for (const r of routes(caseId)) expect((await call(expert, r)).status, `${r.method} ${r.path}`).toBe(404);
    expect((await expert.get("/api/cases")).body.items.map((c: { id: unknown }) => c.id)).not.toContain(caseId);

    await server.ctx.db.write((tx) =>
      tx
        .update(schema.caseTable)
        .set({ expertId, status: "claimed", claimedAt: new Date() })
        .where(eq(schema.caseTable.id, caseId))
        .run(),
    );
    const res = await expert.get(`/api/cases/${caseId}`);
    expect(res.status).toBe(200);
    expect(res.body.abilities).toEqual({
      read: true,
      edit: false,
      addTrace: false,
      deleteTrace: false,
      addPhoto: false,
      deletePhoto: false,
    });
    expect((await expert.get(`/api/cases/${caseId}/events`)).status).toBe(200);
    expect((await expert.patch(`/api/cases/${caseId}`).send({ complaint: "x" })).status).toBe(403);
    expect((await expert.get("/api/cases")).body.items.map((c: { id: unknown }) => c.id)).toContain(caseId);
    // the shop may still add material while claimed, but not edit
    const tech = (await techA.get(`/api/cases/${caseId}`)).body.abilities;
    expect(tech).toMatchObject({ edit: false, addTrace: true, addPhoto: true, deleteTrace: false });
  });

  it("an admin reads any case but does not edit it", async () => {
    const res = await admin.get(`/api/cases/${caseId}`);
    expect(res.status).toBe(200);
    expect(res.body.abilities.read).toBe(true);
    expect(res.body.abilities.edit).toBe(false);
    expect((await admin.patch(`/api/cases/${caseId}`).send({ complaint: "x" })).status).toBe(403);
  });

  it("an unknown id answers 404", async () => {
    expect((await techA.get(`/api/cases/${crypto.randomUUID()}`)).status).toBe(404);
  });
});
