import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import crypto from "node:crypto";
import fs from "node:fs";
import zlib from "node:zlib";
import path from "node:path";
import { eq } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createExpert, createShopTeam, signIn, type SignedInAgent, type ShopTeam } from "../factories";
import { schema } from "../../server/db/client";
import { generateSecondary } from "../../demo/generators/secondary";
import { renderCsv } from "../../demo/generators/csv";

/**
 * Traces API: upload, metadata, min/max windows, original download, removal, tenant isolation.
 * The window is checked against a brute-force reference written here from the definition in the
 * API (bucket k covers [t0 + k·span/width, t0 + (k+1)·span/width); min/max of its samples; empty
 * buckets left out). Sample values go through the same float32 rounding as storage (IEEE 754
 * binary32, Math.fround). Content addresses are checked with Node's own SHA-256 (FIPS 180-4).
 */

let server: TestServer;
let shopA: ShopTeam;
let techA: SignedInAgent;
let ownerA: SignedInAgent;
let techB: SignedInAgent;
let ownerB: SignedInAgent;
let expert: SignedInAgent;
let expertId: string;

const settings = {
  kind: "secondary-ignition",
  probe: "capacitive-secondary",
  kvPerVolt: 10,
  voltsPerDiv: 2,
  timePerDivS: 0.001,
  triggerLevel: 1.5,
  cylinder: 4,
};

/** Seeded PRNG (mulberry32), so the generated data are the same on every run. */
function rng(seed: number) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

interface Generated {
  text: string;
  /** values as the file states them, per channel */
  values: number[][];
  /** times in seconds as the file states them (uneven files), else null */
  times: number[] | null;
}

/** Two channels of invented test data: a 50 Hz wave with noise and a spike every 997 samples. */
function generate(n: number, opts: { rateHz?: number; uneven?: boolean; seed?: number } = {}): Generated {
  const rate = opts.rateHz ?? 100_000;
  const r = rng(opts.seed ?? 7);
  const a: number[] = [];
  const b: number[] = [];
  const times: number[] = [];
  const lines: string[] = [opts.uneven ? "Time (s),A (V),B (V)" : "Time (us),A (V),B (V)"];
  let t = 0;
  for (let i = 0; i < n; i++) {
    const x = Number(
      (2 * Math.sin((2 * Math.PI * 50 * i) / rate) + (r() - 0.5) * 0.2 + (i % 997 === 0 ? 9 : 0)).toPrecision(6),
    );
    const y = Number((Math.cos((2 * Math.PI * 50 * i) / rate) - (i % 1009 === 0 ? 5 : 0)).toPrecision(6));
    a.push(x);
    b.push(y);
    if (opts.uneven) {
      t += (1 / rate) * (0.5 + r()); // strictly increasing, not evenly spaced
      const ts = Number(t.toPrecision(12));
      times.push(ts);
      lines.push(`${ts},${x},${y}`);
    } else {
      lines.push(`${(i * 1e6) / rate},${x},${y}`);
    }
  }
  return { text: lines.join("\n") + "\n", values: [a, b], times: opts.uneven ? times : null };
}

/**
 * The window by brute force over every sample, straight from the definition in docs/api.md: bucket
 * k spans [edge(k), edge(k+1)) with edge(k) = t0 + k·(t1 − t0)/width, edge(width) = t1, each edge
 * moved earlier by a rounding allowance δ (so a sample lying on an edge, like 130 µs at 1 MS/s,
 * belongs to the bucket that starts there). Membership is decided by comparison with the edges.
 */
function bruteWindow(
  g: Generated,
  tr: { t0: number; sampleRateHz: number },
  t0: number,
  t1: number,
  width: number,
  names: string[],
) {
  const span = t1 - t0;
  const edge = (k: number) => (k >= width ? t1 : t0 + (k * span) / width);
  const delta = (1e-9 * span) / width + 8 * Number.EPSILON * Math.max(Math.abs(t0), Math.abs(t1));
  const buckets = new Map<number, { min: number[]; max: number[] }>();
  const n = g.values[0].length;
  for (let i = 0; i < n; i++) {
    const ti = g.times ? g.times[i] : tr.t0 + i / tr.sampleRateHz;
    if (ti < edge(0) - delta || ti >= edge(width) - delta) continue;
    let k = Math.min(width - 1, Math.max(0, Math.floor(((ti - t0) / span) * width)));
    while (k > 0 && ti < edge(k) - delta) k--;
    while (k < width - 1 && ti >= edge(k + 1) - delta) k++;
    let bk = buckets.get(k);
    if (!bk) buckets.set(k, (bk = { min: g.values.map(() => Infinity), max: g.values.map(() => -Infinity) }));
    for (let c = 0; c < g.values.length; c++) {
      const v = Math.fround(g.values[c][i]);
      if (v < bk.min[c]) bk.min[c] = v;
      if (v > bk.max[c]) bk.max[c] = v;
    }
  }
  const ks = [...buckets.keys()].sort((x, y) => x - y);
  return {
    t: ks.map((k) => t0 + (k * span) / width),
    series: names.map((name, c) => ({
      name,
      min: ks.map((k) => buckets.get(k)!.min[c]),
      max: ks.map((k) => buckets.get(k)!.max[c]),
    })),
  };
}

async function newCase(agent: SignedInAgent): Promise<string> {
  const res = await agent.post("/api/cases").send({
    vehicle: { make: "Astaro", model: "Dune" },
    complaint: "Misfire at idle",
    codes: ["P0304"],
    system: "ignition",
  });
  expect(res.status).toBe(201);
  return res.body.id;
}

// eslint-disable-next-line @typescript-eslint/no-explicit-any -- a supertest agent of any signed-in user
function upload(agent: any, caseId: string, body: string | Buffer, filename = "capture.csv", s: unknown = settings) {
  return agent
    .post(`/api/cases/${caseId}/traces`)
    .field("settings", typeof s === "string" ? s : JSON.stringify(s))
    .attach("file", Buffer.isBuffer(body) ? body : Buffer.from(body), { filename, contentType: "text/csv" });
}

async function storedAnalysis(id: string) {
  return (await server.ctx.db.read((tx) => tx.select().from(schema.trace).where(eq(schema.trace.id, id)).get()))!
    .analysis;
}

function filesUnder(dir: string): string[] {
  if (!fs.existsSync(dir)) return [];
  return (fs.readdirSync(dir, { recursive: true }) as string[]).filter((p) => fs.statSync(path.join(dir, p)).isFile());
}

beforeAll(async () => {
  server = await startTestServer();
  shopA = await createShopTeam(server);
  const shopB = await createShopTeam(server);
  techA = await signIn(server, shopA.technicians[0]);
  ownerA = await signIn(server, shopA.owner);
  techB = await signIn(server, shopB.technicians[0]);
  ownerB = await signIn(server, shopB.owner);
  const e = await createExpert(server);
  expertId = e.id;
  expert = await signIn(server, e);
});
afterAll(async () => {
  await server?.close();
});

describe("POST /api/cases/:id/traces", () => {
  it("stores a CSV: metadata row, content-addressed original, binary channels, history; no temp file left", async () => {
    const caseId = await newCase(techA);
    const g = generate(2000);
    const res = await upload(techA, caseId, g.text, "coil4.csv");
    expect(res.status).toBe(201);
    const t = res.body;
    // 2000 samples, 10 µs apart → 100 kHz, 2000 / 100 kHz = 20 ms
    expect(t).toMatchObject({ samples: 2000, sampleRateHz: 100_000, name: "coil4.csv", kind: "secondary-ignition" });
    expect(t.durationS).toBeCloseTo(0.02, 12);
    expect(t.channels.map((c: { name: string; unit: string }) => [c.name, c.unit])).toEqual([
      ["A", "V"],
      ["B", "V"],
    ]);
    expect(t.channels[0].max).toBe(Math.fround(Math.max(...g.values[0])));
    expect(t.channels[1].min).toBe(Math.fround(Math.min(...g.values[1])));
    expect(t.settings).toMatchObject({
      voltsPerDiv: 2,
      timePerDivS: 0.001,
      triggerLevel: 1.5,
      cylinder: 4,
      triggerMode: "auto",
      coupling: "dc",
    });
    // measured once at upload (shared/analysis), stored with the trace: the kind from the settings
    expect(t.analysis).toMatchObject({ kind: "secondary-ignition", channel: "A" });
    expect(await storedAnalysis(t.id)).toEqual(t.analysis);

    const sha = crypto.createHash("sha256").update(g.text).digest("hex");
    const row = (await server.ctx.db.read((tx) =>
      tx.select().from(schema.trace).where(eq(schema.trace.id, t.id)).get(),
    ))!;
    expect(row.sha256).toBe(sha);
    // kept gzip-compressed (RFC 1952), addressed by the SHA-256 of the plain bytes; node:zlib inflates it back
    expect(row.originalPath).toBe(`originals/${sha.slice(0, 2)}/${sha}.gz`);
    expect(zlib.gunzipSync(fs.readFileSync(path.join(server.dir, row.originalPath))).toString("utf8")).toBe(g.text);
    expect(fs.existsSync(path.join(server.dir, row.dataPath))).toBe(true);
    expect(row.dataPath.startsWith("traces/")).toBe(true);
    expect(filesUnder(path.join(server.dir, "tmp"))).toEqual([]);

    const c = (await techA.get(`/api/cases/${caseId}`)).body;
    expect(c.traces.map((x: { id: unknown }) => x.id)).toEqual([t.id]);
    expect(Object.keys(c.traces[0])).toEqual(
      expect.arrayContaining([
        "id",
        "name",
        "samples",
        "sampleRateHz",
        "durationS",
        "channels",
        "settings",
        "kind",
        "analysis",
      ]),
    );
    const ev = (await techA.get(`/api/cases/${caseId}/events`)).body.items.map((e: { type: unknown }) => e.type);
    expect(ev).toEqual(["created", "trace_added"]);
  });

  it.each([
    [
      "semicolons with decimal commas and a [ms] time column",
      "Time [ms];Coil (V)\n0;0,5\n0,02;1,5\n0,04;2,5\n0,06;3,5\n0,08;4,5\n",
      {},
      5,
      50_000,
      [0.5, 1.5],
    ],
    [
      "tab-separated with a _us time column and scientific notation",
      "t_us\tA\n0\t1e-3\n20\t2E-3\n40\t3e-3\n60\t4e-3\n",
      {},
      4,
      50_000,
      [1e-3, 2e-3],
    ],
    [
      "metadata and comment lines before the header",
      "# exported by a bench scope\nModel,XYZ\n\nTime (s),A (V)\n0,1\n0.001,2\n0.002,3\n0.003,4\n",
      {},
      4,
      1000,
      [1, 2],
    ],
    [
      "no time column, with the stated sample rate",
      "A (V),B (V)\n1,2\n3,4\n5,6\n7,8\n",
      { sampleRateHz: 25_000 },
      4,
      25_000,
      [1, 3],
    ],
    [
      "CRLF line ends and a (µs) time column",
      "Time (µs),A (V)\r\n0,1\r\n5,2\r\n10,3\r\n15,4\r\n",
      {},
      4,
      200_000,
      [1, 2],
    ],
  ])("accepts %s", async (_label, text, extra, samples, rate, firstValues) => {
    // expected rates: time step 0.02 ms → 50 kHz; 20 µs → 50 kHz; 1 ms → 1 kHz; 5 µs → 200 kHz (f = 1/Δt)
    const caseId = await newCase(techA);
    const res = await upload(techA, caseId, text as string, "variant.csv", { ...settings, ...(extra as object) });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.samples).toBe(samples);
    expect(res.body.sampleRateHz).toBeCloseTo(rate as number, 6);
    const w = (await techA.get(`/api/traces/${res.body.id}/window?width=${samples}`)).body;
    expect(w.series[0].min.slice(0, 2)).toEqual((firstValues as number[]).map(Math.fround));
  });

  it("keeps the same content once on disk when it is uploaded twice", async () => {
    const caseId = await newCase(techA);
    const g = generate(500, { seed: 11 });
    const r1 = await upload(techA, caseId, g.text, "first.csv");
    const r2 = await upload(ownerA, caseId, g.text, "second.csv");
    expect(r1.status).toBe(201);
    expect(r2.status).toBe(201);
    const rows = await server.ctx.db.read((tx) =>
      tx.select().from(schema.trace).where(eq(schema.trace.caseId, caseId)).all(),
    );
    expect(rows).toHaveLength(2);
    expect(rows[0].originalPath).toBe(rows[1].originalPath);
    // removing one keeps the file for the other
    expect((await techA.delete(`/api/traces/${r1.body.id}`)).status).toBe(204);
    expect(fs.existsSync(path.join(server.dir, rows[0].originalPath))).toBe(true);
    const dl = await techA.get(`/api/traces/${r2.body.id}/original`).buffer(true);
    expect(dl.status).toBe(200);
  });
});

describe("GET /api/traces/:id/window", () => {
  let uniformId: string;
  let uniform: Generated;
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- the trace's JSON answer
  let uniformMeta: any;
  let unevenId: string;
  let uneven: Generated;
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- the trace's JSON answer
  let unevenMeta: any;

  beforeAll(async () => {
    const caseId = await newCase(techA);
    uniform = generate(300_000, { seed: 3 });
    let res = await upload(techA, caseId, uniform.text, "long.csv");
    expect(res.status).toBe(201);
    uniformId = res.body.id;
    uniformMeta = res.body;
    uneven = generate(20_000, { uneven: true, seed: 5 });
    res = await upload(techA, caseId, uneven.text, "uneven.csv");
    expect(res.status).toBe(201);
    unevenId = res.body.id;
    unevenMeta = res.body;
  });

  const names = ["A", "B"];

  it("defaults to the whole trace and matches the brute-force min/max", async () => {
    const res = await techA.get(`/api/traces/${uniformId}/window?width=1500`);
    expect(res.status).toBe(200);
    const t0 = uniformMeta.t0;
    const t1 = uniformMeta.t0 + uniformMeta.durationS;
    expect(res.body).toMatchObject({ t0, t1, width: 1500 });
    const ref = bruteWindow(uniform, uniformMeta, t0, t1, 1500, names);
    expect(res.body.t).toEqual(ref.t);
    expect(res.body.series).toEqual(ref.series);
    expect(res.body.t).toHaveLength(1500); // 300,000 samples fill every bucket
    // the spike of 9 V added every 997 samples is in the overall maximum
    expect(Math.max(...res.body.series[0].max)).toBe(uniformMeta.channels[0].max);
  });

  it.each([
    [0.2, 2.8, 7], // few wide buckets: the coarse pyramid levels
    [0.5, 0.5004, 8000], // fewer samples than buckets: empty buckets left out
    [1.23456, 1.3, 333], // an odd width over a narrow window
    [-0.01, 0.001, 50], // reaching before the start
    [2.99, 3.5, 64], // reaching past the end
  ])("window [%f, %f) in %i buckets matches the brute-force reference (uniform time)", async (t0, t1, width) => {
    const res = await techA.get(`/api/traces/${uniformId}/window?t0=${t0}&t1=${t1}&width=${width}`);
    expect(res.status).toBe(200);
    const ref = bruteWindow(uniform, uniformMeta, t0, t1, width, names);
    expect(ref.t.length).toBeGreaterThan(0);
    expect(res.body.t).toEqual(ref.t);
    expect(res.body.series).toEqual(ref.series);
  });

  it.each([
    [undefined, undefined, 900],
    [0.01, 0.05, 123],
    [0.1, 0.1001, 4000],
  ])("window [%s, %s) in %i buckets matches the brute-force reference (uneven time)", async (t0, t1, width) => {
    const qs = new URLSearchParams({ width: String(width) });
    if (t0 !== undefined) qs.set("t0", String(t0));
    if (t1 !== undefined) qs.set("t1", String(t1));
    const res = await techA.get(`/api/traces/${unevenId}/window?${qs}`);
    expect(res.status).toBe(200);
    const a = t0 ?? unevenMeta.t0;
    const b = t1 ?? unevenMeta.t0 + unevenMeta.durationS;
    const ref = bruteWindow(uneven, unevenMeta, a, b, width, names);
    expect(ref.t.length).toBeGreaterThan(0);
    expect(res.body.t).toEqual(ref.t);
    expect(res.body.series).toEqual(ref.series);
  });

  it("refuses a width over 8000, a reversed window and text with 400", async () => {
    for (const qs of ["width=8001", "width=0", "t0=1&t1=0.5", "t0=abc", "width=2.5", "t1=1e400", "t0=-1e12"]) {
      const res = await techA.get(`/api/traces/${uniformId}/window?${qs}`);
      expect(res.status, qs).toBe(400);
      expect(res.body.error.code).toBe("validation_failed");
    }
    expect((await techA.get(`/api/traces/${uniformId}/window?width=8000`)).status).toBe(200);
  });
});

describe("comparison across a case's traces", () => {
  it("compares the traces of one kind cylinder to cylinder and flags the odd one out", async () => {
    const caseId = await newCase(techA);
    expect((await techA.get(`/api/cases/${caseId}`)).body.comparison).toBeNull();
    const ids: string[] = [];
    // Four coils; cylinder 4's spark is generated with half the burn time (0.7 ms against 1.5 ms,
    // the generator's truth). Outliers: modified z-score of Iglewicz and Hoaglin (1993), |M| > 3.5.
    for (const cyl of [1, 2, 3, 4]) {
      const g = generateSecondary({ seed: cyl, sampleRateHz: 200_000, events: 3, burnTimeMs: cyl === 4 ? 0.7 : 1.5 });
      const res = await upload(techA, caseId, renderCsv(g.trace, { timeUnit: "ms" }), `cyl${cyl}.csv`, {
        ...g.settings,
        cylinder: cyl,
      });
      expect(res.status, JSON.stringify(res.body)).toBe(201);
      expect(res.body.analysis.summary.burnTimeMs.median).toBeCloseTo(cyl === 4 ? 0.7 : 1.5, 0);
      ids.push(res.body.id);
      if (cyl === 1) expect((await techA.get(`/api/cases/${caseId}`)).body.comparison).toBeNull(); // one trace: nothing to compare
    }
    // a trace of another kind is left out of the comparison
    const other = await upload(techA, caseId, generate(2000, { seed: 51 }).text, "sensor.csv", {
      voltsPerDiv: 1,
      timePerDivS: 0.002,
      kind: "generic",
    });
    expect(other.status).toBe(201);

    const c = (await techA.get(`/api/cases/${caseId}`)).body;
    expect(c.comparison.kind).toBe("secondary-ignition");
    expect(c.comparison.traceIds).toEqual(ids);
    const burn = c.comparison.metrics.find(
      (m: { metric: string; values: { traceId: unknown }[] }) => m.metric === "burnTimeMs",
    );
    expect(burn.values.map((v: { traceId: unknown }) => v.traceId)).toEqual(ids);
    expect(c.comparison.outliers.map((o: { traceId: string; metric: string }) => [o.traceId, o.metric])).toEqual([
      [ids[3], "burnTimeMs"],
    ]);
    const again = await techA.get(`/api/cases/${caseId}/comparison`);
    expect(again.status).toBe(200);
    expect(again.body.comparison).toEqual(c.comparison);
  });
});

describe("GET /api/traces/:id/original", () => {
  it("sends the original bytes as an attachment with nosniff", async () => {
    const caseId = await newCase(techA);
    const text = "Time (ms);A (V)\n0;1,25\n0,1;2,5\n0,2;3,75\n0,3;5\n";
    const up = await upload(techA, caseId, text, "bay 3 coil.csv");
    expect(up.status).toBe(201);
    const res = await techA
      .get(`/api/traces/${up.body.id}/original`)
      .buffer(true)
      .parse((r, cb) => {
        const chunks: Buffer[] = [];
        r.on("data", (c: Buffer) => chunks.push(c));
        r.on("end", () => cb(null, Buffer.concat(chunks)));
      });
    expect(res.status).toBe(200);
    expect(res.headers["content-disposition"]).toMatch(/^attachment; filename="bay 3 coil\.csv"/);
    expect(res.headers["x-content-type-options"]).toBe("nosniff");
    expect(Buffer.compare(res.body as Buffer, Buffer.from(text))).toBe(0);
  });
});

describe("DELETE /api/traces/:id", () => {
  it("removes a draft's trace with its files and records it; refuses once submitted (409)", async () => {
    const caseId = await newCase(techA);
    const g = generate(300, { seed: 21 });
    const up = await upload(techA, caseId, g.text);
    const row = (await server.ctx.db.read((tx) =>
      tx.select().from(schema.trace).where(eq(schema.trace.id, up.body.id)).get(),
    ))!;
    expect((await ownerA.delete(`/api/traces/${up.body.id}`)).status).toBe(204);
    expect(
      await server.ctx.db.read((tx) => tx.select().from(schema.trace).where(eq(schema.trace.id, up.body.id)).get()),
    ).toBeUndefined();
    expect(fs.existsSync(path.join(server.dir, row.originalPath))).toBe(false);
    expect(fs.existsSync(path.join(server.dir, row.dataPath))).toBe(false);
    expect((await techA.get(`/api/traces/${up.body.id}`)).status).toBe(404);
    const ev = (await techA.get(`/api/cases/${caseId}/events`)).body.items.map((e: { type: unknown }) => e.type);
    expect(ev).toEqual(["created", "trace_added", "trace_deleted"]);

    const up2 = await upload(techA, caseId, generate(300, { seed: 22 }).text);
    await server.ctx.db.write((tx) =>
      tx.update(schema.caseTable).set({ status: "queued" }).where(eq(schema.caseTable.id, caseId)).run(),
    );
    const res = await techA.delete(`/api/traces/${up2.body.id}`);
    expect(res.status).toBe(409);
    expect((await techA.get(`/api/traces/${up2.body.id}`)).status).toBe(200);
    // a queued case takes no new traces either
    expect((await upload(techA, caseId, generate(300).text)).status).toBe(409);
  });
});

describe("tenant isolation on the trace routes", () => {
  let caseId: string;
  let traceId: string;
  beforeAll(async () => {
    caseId = await newCase(techA);
    const up = await upload(techA, caseId, generate(400, { seed: 31 }).text);
    expect(up.status).toBe(201);
    traceId = up.body.id;
  });

  const readRoutes = () => [
    `/api/traces/${traceId}`,
    `/api/traces/${traceId}/window?width=10`,
    `/api/traces/${traceId}/original`,
  ];
  const traceCount = async () =>
    (await server.ctx.db.read((tx) => tx.select().from(schema.trace).where(eq(schema.trace.caseId, caseId)).all()))
      .length;

  it("another shop's technician and owner get 404 on every trace route and change nothing", async () => {
    for (const who of [techB, ownerB]) {
      for (const p of readRoutes()) {
        const res = await who.get(p);
        expect(res.status, p).toBe(404);
        expect(res.body.error.code).toBe("not_found");
      }
      expect((await who.delete(`/api/traces/${traceId}`)).status).toBe(404);
      expect((await upload(who, caseId, generate(50).text)).status).toBe(404);
    }
    expect(await traceCount()).toBe(1);
    expect(filesUnder(path.join(server.dir, "tmp"))).toEqual([]);
  });

  it("a signed-out request gets 401 on every trace route", async () => {
    const anon = request(server.url);
    for (const p of readRoutes()) expect((await anon.get(p)).status, p).toBe(401);
    expect((await anon.delete(`/api/traces/${traceId}`)).status).toBe(401);
    expect((await upload(anon, caseId, generate(50).text)).status).toBe(401);
    expect(await traceCount()).toBe(1);
  });

  it("an expert who has not claimed the case gets 404; once claimed they read but do not change", async () => {
    for (const p of readRoutes()) expect((await expert.get(p)).status, p).toBe(404);
    expect((await expert.delete(`/api/traces/${traceId}`)).status).toBe(404);
    expect((await upload(expert, caseId, generate(50).text)).status).toBe(404);

    await server.ctx.db.write((tx) =>
      tx.update(schema.caseTable).set({ expertId, status: "claimed" }).where(eq(schema.caseTable.id, caseId)).run(),
    );
    for (const p of readRoutes()) expect((await expert.get(p)).status, p).toBe(200);
    expect((await expert.delete(`/api/traces/${traceId}`)).status).toBe(403);
    expect((await upload(expert, caseId, generate(50).text)).status).toBe(403);
    expect(await traceCount()).toBe(1);
    // while claimed the shop may still add a capture the expert asked for
    expect((await upload(techA, caseId, generate(60, { seed: 41 }).text)).status).toBe(201);
  });

  it("an unknown trace id answers 404", async () => {
    expect((await techA.get(`/api/traces/${crypto.randomUUID()}/window`)).status).toBe(404);
    expect((await upload(techA, crypto.randomUUID(), generate(50).text)).status).toBe(404);
  });
});
