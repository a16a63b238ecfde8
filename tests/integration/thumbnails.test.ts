/**
 * Waveform thumbnails of casebook entries (GET /api/casebook/:id/thumbnail.svg): drawn from the
 * entry's first published trace, authorised like the entry (a hidden entry is 404 to everyone but
 * admins; signed out 401), answered 304 to a matching ETag, and the picture shows the capture's
 * own shape — its highest point is the firing line, where the generator put it.
 *
 * The capture comes from the project's generator (demo/generators/secondary.ts) with stated
 * parameters: 200 kS/s, 1500 rpm, one firing of 0.8 V above the baseline, a 1.5 ms spark line of
 * 0.15 V. The thumbnail's window (server/services/thumbnails.ts): twice the first event's length
 * from 15 % of it before the firing, i.e. 2 × 1.5 ms / 0.85 = 3.53 ms from 0.53 ms before it.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import { eq } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createAdmin, createExpert, createShopTeam, signIn, type SignedInAgent } from "../factories";
import { generateSecondary } from "../../demo/generators/secondary";
import { renderCsv } from "../../demo/generators/csv";
import { schema } from "../../server/db/client";
import { insertCasebookEntries } from "../../server/services/casebook";
import { THUMB, thumbnailWindow } from "../../server/services/thumbnails";
import type { CasebookTrace } from "../../shared/schemas/casebook";

let server: TestServer;
let tech: SignedInAgent;
let admin: SignedInAgent;
let entryId = "";
let emptyId = "";
const g = generateSecondary({
  seed: 77,
  sampleRateHz: 200_000,
  rpm: 1500,
  events: 1,
  peakV: 0.8,
  burnLevelV: 0.15,
  burnTimeMs: 1.5,
});
let traceT0 = 0;

beforeAll(async () => {
  server = await startTestServer();
  const team = await createShopTeam(server);
  const e = await createExpert(server);
  tech = await signIn(server, team.technicians[0]);
  admin = await signIn(server, await createAdmin(server));
  const created = await tech.post("/api/cases").send({
    vehicle: { year: 2017, make: "Veltra", model: "Orvane" },
    complaint: "Misfire on cylinder 2",
    system: "ignition",
  });
  expect(created.status).toBe(201);
  const up = await request(server.url)
    .post(`/api/cases/${created.body.id}/traces`)
    .set("Cookie", tech.cookie)
    .field("settings", JSON.stringify({ ...g.settings, timePerDivS: 0.01, cylinder: 2 }))
    .attach("file", Buffer.from(renderCsv(g.trace)), "coil2.csv");
  expect(up.status, JSON.stringify(up.body)).toBe(201);
  const b = up.body;
  traceT0 = b.t0;
  const t: CasebookTrace = {
    id: b.id,
    name: "Coil 2",
    kind: b.kind,
    samples: b.samples,
    sampleRateHz: b.sampleRateHz,
    t0: b.t0,
    durationS: b.durationS,
    channels: b.channels,
    settings: b.settings,
    analysis: b.analysis,
    windowUrl: `/api/traces/${b.id}/window`,
  };
  [entryId, emptyId] = await insertCasebookEntries(server.ctx.db, [
    {
      caseId: created.body.id,
      expertId: e.id,
      vehicle: { year: 2017, make: "Veltra", model: "Orvane" },
      complaint: "Misfire",
      diagnosis: "Coil 2",
      rootCause: "Coil 2",
      fix: "Coil 2",
      traces: [t],
    },
    {
      vehicle: { year: 2016, make: "Veltra", model: "Orvane" },
      complaint: "No traces here",
      diagnosis: "—",
      rootCause: "—",
      fix: "—",
      traces: [],
      publishedAt: new Date(Date.now() + 1000),
    },
  ]);
});

afterAll(async () => {
  await server?.close();
});

/** The answer's SVG text (supertest keeps an image's body as a Buffer). */
const svgOf = (r: { text?: string; body: unknown }) => r.text ?? Buffer.from(r.body as Buffer).toString("utf8");

/** The band's points "x y" from the SVG's path (upper edge forwards, then the lower edge back). */
function bandPoints(svg: string): { x: number; y: number }[] {
  const d = /<path d="(M[^"]+Z)"/.exec(svg)?.[1] ?? "";
  return d
    .slice(1, -1)
    .split("L")
    .map((p) => p.split(" ").map(Number))
    .map(([x, y]) => ({ x, y }));
}

describe("casebook thumbnails", () => {
  it("draw the first trace: its highest point is the firing line, at the generator's time", async () => {
    const r = await tech.get(`/api/casebook/${entryId}/thumbnail.svg`);
    expect(r.status).toBe(200);
    expect(r.headers["content-type"]).toMatch(/^image\/svg\+xml/);
    expect(r.headers["cache-control"]).toMatch(/private/);
    const svg = svgOf(r);
    expect(svg).toMatch(
      new RegExp(`^<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${THUMB.width} ${THUMB.height}"`),
    );
    expect(svg).not.toMatch(/<script|<text|on\w+=/i);
    const pts = bandPoints(svg);
    expect(pts.length).toBeGreaterThan(20);
    const top = pts.reduce((a, b) => (b.y < a.y ? b : a));
    // where the firing line is: its time in the thumbnail's window, mapped onto the inner width
    const analysis = { events: [{ timeS: g.truth.events[0].timeS - g.trace.t0 + traceT0, burnTimeMs: 1.5 }] };
    const w = thumbnailWindow({
      samples: g.trace.samples,
      t0: traceT0,
      durationS: g.trace.durationS,
      settings: {},
      analysis,
    });
    const xFire = THUMB.pad + ((analysis.events[0].timeS - w.t0) / (w.t1 - w.t0)) * (THUMB.width - 2 * THUMB.pad);
    // within 2 px (a bucket is 3.53 ms / 320 = 11 µs; the apex is 8 µs after the firing starts)
    expect(Math.abs(top.x - xFire)).toBeLessThan(2);
    // and it is the top of the picture (levels are fitted to the data with a 6 % margin)
    expect(top.y).toBeLessThan(THUMB.pad + (THUMB.height - 2 * THUMB.pad) * 0.1);
  });

  it("answer 304 to a matching ETag, the same picture every time", async () => {
    const a = await tech.get(`/api/casebook/${entryId}/thumbnail.svg`);
    const b = await tech.get(`/api/casebook/${entryId}/thumbnail.svg`).set("If-None-Match", a.headers.etag);
    expect(b.status).toBe(304);
    const c = await admin.get(`/api/casebook/${entryId}/thumbnail.svg`);
    expect(c.headers.etag).toBe(a.headers.etag);
    expect(svgOf(c)).toBe(svgOf(a));
  });

  it("are authorised like the entry: signed out 401, hidden 404 but for admins, unknown 404", async () => {
    expect((await request(server.url).get(`/api/casebook/${entryId}/thumbnail.svg`)).status).toBe(401);
    await server.ctx.db.write((tx) =>
      tx.update(schema.casebookEntry).set({ hidden: true }).where(eq(schema.casebookEntry.id, entryId)).run(),
    );
    try {
      expect((await tech.get(`/api/casebook/${entryId}/thumbnail.svg`)).status).toBe(404);
      expect((await admin.get(`/api/casebook/${entryId}/thumbnail.svg`)).status).toBe(200);
    } finally {
      await server.ctx.db.write((tx) =>
        tx.update(schema.casebookEntry).set({ hidden: false }).where(eq(schema.casebookEntry.id, entryId)).run(),
      );
    }
    expect((await tech.get(`/api/casebook/no-such-entry/thumbnail.svg`)).status).toBe(404);
  });

  it("show a plain placeholder for an entry without a published trace", async () => {
    const r = await tech.get(`/api/casebook/${emptyId}/thumbnail.svg`);
    expect(r.status).toBe(200);
    expect(svgOf(r)).toMatch(/stroke-dasharray/);
    expect(svgOf(r)).not.toMatch(/fill-opacity/);
  });
});

describe("the thumbnail's window (hand-computed)", () => {
  it("around the first event when it has a length; else the capture's screen; else the whole trace", () => {
    const base = { samples: 1000, t0: 0, durationS: 0.1, settings: { timePerDivS: 0.002 } };
    const w = thumbnailWindow({ ...base, analysis: { events: [{ timeS: 0.05, burnTimeMs: 1.7 }] } });
    // 2 × 1.7 ms / 0.85 = 4 ms, starting 15 % of it (0.6 ms) before the firing
    expect(w.t0).toBeCloseTo(0.0494, 12);
    expect(w.t1).toBeCloseTo(0.0534, 12);
    expect(thumbnailWindow({ ...base, analysis: null })).toEqual({ t0: 0, t1: 0.02 });
    expect(thumbnailWindow({ ...base, settings: {}, analysis: null })).toEqual({ t0: 0, t1: 0.1 });
  });
});
