import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import fs from "node:fs";
import http from "node:http";
import path from "node:path";
import { sql } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createExpert, createShopTeam, signIn, type SignedInAgent } from "../factories";
import { schema } from "../../server/db/client";
import { checkTextStart, detectImageType } from "../../server/uploads/magic";

/**
 * Refused uploads leave nothing behind: no row, no stored file, no temp file. The data directory is
 * listed recursively before and after each refusal (the SQLite files aside) and the tables counted.
 *
 * Magic numbers (from memory, as published in each format's specification):
 *   JPEG  FF D8 FF                   — ITU-T T.81 Annex B (SOI marker, then a marker)
 *   PNG   89 50 4E 47 0D 0A 1A 0A    — PNG specification, section 5.2
 *   WebP  "RIFF" size "WEBP"         — RFC 9649, section 2
 *   ZIP   50 4B 03 04                — PKWARE APPNOTE.TXT, local file header signature
 */
const JPEG = Buffer.concat([
  Buffer.from([0xff, 0xd8, 0xff, 0xe0, 0x00, 0x10]),
  Buffer.from("JFIF\0"),
  Buffer.alloc(200, 7),
]);
const PNG = Buffer.concat([
  Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
  Buffer.from([0, 0, 0, 13]),
  Buffer.from("IHDR"),
  Buffer.alloc(200, 1),
]);
const WEBP = Buffer.concat([
  Buffer.from("RIFF"),
  Buffer.from([0xc8, 0, 0, 0]),
  Buffer.from("WEBPVP8 "),
  Buffer.alloc(200, 3),
]);
const ZIP = Buffer.concat([Buffer.from([0x50, 0x4b, 0x03, 0x04, 0x14, 0, 0, 0]), Buffer.alloc(300, 0)]);

const LIMIT = 64 * 1024;
const PHOTO_LIMIT = 32 * 1024;
const settings = { voltsPerDiv: 2, timePerDivS: 0.001 };

let server: TestServer;
let tech: SignedInAgent;
let otherTech: SignedInAgent;
let otherOwner: SignedInAgent;
let expert: SignedInAgent;
let caseId: string;

function csv(rows: number, start = "Time (ms),A (V)"): string {
  const lines = [start];
  for (let i = 0; i < rows; i++) lines.push(`${i * 0.01},${(Math.sin(i / 10) * 3).toFixed(4)}`);
  return lines.join("\n") + "\n";
}

/** Every file under the data directory except the SQLite database and the mail catcher's store. */
function dataFiles(): string[] {
  return (fs.readdirSync(server.dir, { recursive: true }) as string[])
    .filter((p) => !/^test\.db/.test(p) && !p.startsWith("mail"))
    .filter((p) => fs.statSync(path.join(server.dir, p)).isFile())
    .sort();
}
const rows = async () => ({
  traces: (await server.ctx.db.read((tx) =>
    tx
      .select({ n: sql<number>`count(*)` })
      .from(schema.trace)
      .get(),
  ))!.n,
  photos: (await server.ctx.db.read((tx) =>
    tx
      .select({ n: sql<number>`count(*)` })
      .from(schema.photo)
      .get(),
  ))!.n,
  events: (await server.ctx.db.read((tx) =>
    tx
      .select({ n: sql<number>`count(*)` })
      .from(schema.caseEvent)
      .get(),
  ))!.n,
});

/** Runs a refused request and checks that nothing was left behind. */
async function expectNothingLeft(run: () => Promise<request.Response>, status: number): Promise<request.Response> {
  const files = dataFiles();
  const before = await rows();
  const res = await run();
  expect(res.status, JSON.stringify(res.body)).toBe(status);
  expect(res.body.error).toEqual(expect.objectContaining({ code: expect.any(String), message: expect.any(String) }));
  expect(dataFiles()).toEqual(files);
  expect(await rows()).toEqual(before);
  expect(fs.readdirSync(path.join(server.dir, "tmp", "uploads"))).toEqual([]);
  return res;
}

/** `s` null: no settings field at all. */
const uploadTrace = (
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- a supertest agent of any signed-in user
  agent: any,
  body: Buffer | string,
  filename = "capture.csv",
  s: unknown = settings,
  contentType = "text/csv",
) => {
  let req = agent.post(`/api/cases/${caseId}/traces`);
  if (s !== null) req = req.field("settings", typeof s === "string" ? s : JSON.stringify(s));
  return req.attach("file", Buffer.isBuffer(body) ? body : Buffer.from(body), { filename, contentType });
};
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- a supertest agent of any signed-in user
const uploadPhoto = (agent: any, body: Buffer, filename: string, contentType: string, id = caseId) =>
  agent.post(`/api/cases/${id}/photos`).attach("file", body, { filename, contentType });

beforeAll(async () => {
  server = await startTestServer({ MAX_TRACE_BYTES: String(LIMIT), MAX_PHOTO_BYTES: String(PHOTO_LIMIT) });
  const a = await createShopTeam(server);
  const b = await createShopTeam(server);
  tech = await signIn(server, a.technicians[0]);
  otherTech = await signIn(server, b.technicians[0]);
  otherOwner = await signIn(server, b.owner);
  expert = await signIn(server, await createExpert(server));
  const res = await tech
    .post("/api/cases")
    .send({ vehicle: { make: "Korrin", model: "Vale" }, complaint: "No start", system: "ignition" });
  caseId = res.body.id;
  // one accepted upload first, so "nothing left" is checked against a data directory that has content
  expect((await uploadTrace(tech, csv(50))).status).toBe(201);
});
afterAll(async () => {
  await server?.close();
});

describe("refused trace uploads leave nothing behind", () => {
  it("text in a numeric column: 400 naming the line and the reason", async () => {
    const text = csv(20)
      .replace("0.05,", "0.05,x")
      .replace(/0\.05,x[^\n]*/, "0.05,abc");
    const res = await expectNothingLeft(() => uploadTrace(tech, text), 400);
    expect(res.body.error.code).toBe("trace_unreadable");
    // header is line 1, the row of i = 5 (time 0.05) is line 7
    expect(res.body.error.message).toMatch(/line 7/);
    expect(res.body.error.message).toMatch(/not a number/);
    expect(res.body.error.details).toEqual({ reason: "text-in-numeric-column", line: 7 });
  });

  it.each([
    ["an empty file", "", "empty-file"],
    ["a header without numeric rows", "Time (ms),A (V)\nfoo,bar\n", "no-numeric-rows"],
    ["time that goes backwards", "Time (ms),A (V)\n0,1\n0.01,2\n0.005,3\n0.03,4\n0.04,5\n", "time-not-increasing"],
  ])("%s: 400 with the parser's reason", async (_label, text, reason) => {
    const res = await expectNothingLeft(() => uploadTrace(tech, text), 400);
    expect(res.body.error.details.reason).toBe(reason);
  });

  it("over the size limit: 413, no temp file, no row", async () => {
    const big = csv(8000); // ≈ 100 KB > 64 KB limit
    expect(Buffer.byteLength(big)).toBeGreaterThan(LIMIT);
    const res = await expectNothingLeft(() => uploadTrace(tech, big), 413);
    expect(res.body.error.code).toBe("too_large");
    expect(res.body.error.message).toMatch(/64 KB/);
  });

  it("exactly at the limit is accepted (multer: fileSize is the largest size allowed)", async () => {
    let text = csv(5000);
    text = text.slice(0, text.lastIndexOf("\n", LIMIT - 1) + 1);
    text = text + "#".repeat(LIMIT - Buffer.byteLength(text) - 1) + "\n";
    expect(Buffer.byteLength(text)).toBe(LIMIT);
    const res = await uploadTrace(tech, text);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
  });

  it.each([
    ["a PNG renamed .csv", PNG],
    ["a ZIP archive renamed .csv", ZIP],
    ["a JPEG sent as text/csv", JPEG],
    ["binary bytes", Buffer.from([0x01, 0x02, 0x03, 0x00, 0x41, 0x42])],
    ["UTF-16 text", Buffer.from("\ufeffTime (ms),A (V)\n0,1\n", "utf16le")],
  ])("not CSV/TSV text (%s): 415", async (_label, body) => {
    const res = await expectNothingLeft(() => uploadTrace(tech, body), 415);
    expect(res.body.error.code).toBe("unsupported_type");
  });

  it.each([
    ["missing settings", null, "settings"],
    ["settings that are not JSON", "{volts: 2", "settings"],
    ["settings without volts/division", JSON.stringify({ timePerDivS: 0.001 }), "settings.voltsPerDiv"],
    ["settings with an unknown key", JSON.stringify({ ...settings, colour: "red" }), "settings"],
    ["a negative time/division", JSON.stringify({ voltsPerDiv: 2, timePerDivS: -1 }), "settings.timePerDivS"],
  ])("%s: 400 naming the field", async (_label, s, field) => {
    const res = await expectNothingLeft(() => uploadTrace(tech, csv(20), "c.csv", s), 400);
    expect(res.body.error.code).toBe("validation_failed");
    expect(res.body.error.details.fields.map((f: { path: unknown }) => f.path)).toContain(field);
  });

  it("no time column and no sample rate: 400 from the parser", async () => {
    const res = await expectNothingLeft(() => uploadTrace(tech, "A (V)\n1\n2\n3\n4\n5\n"), 400);
    expect(res.body.error.details.reason).toBe("no-sample-rate");
  });

  it("no file: 400", async () => {
    const res = await expectNothingLeft(
      () => tech.post(`/api/cases/${caseId}/traces`).field("settings", JSON.stringify(settings)),
      400,
    );
    expect(res.body.error.code).toBe("file_missing");
  });

  it("a second file or another file field: 400", async () => {
    await expectNothingLeft(
      () =>
        tech
          .post(`/api/cases/${caseId}/traces`)
          .field("settings", JSON.stringify(settings))
          .attach("other", Buffer.from(csv(10)), "x.csv"),
      400,
    );
  });

  it("an upload the client abandons half-way leaves no temp file and no row", async () => {
    const before = await rows();
    const files = dataFiles();
    const boundary = "----burnline-test-boundary";
    const head = Buffer.from(
      `--${boundary}\r\nContent-Disposition: form-data; name="settings"\r\n\r\n${JSON.stringify(settings)}\r\n` +
        `--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="cut.csv"\r\nContent-Type: text/csv\r\n\r\n`,
    );
    const body = Buffer.from(csv(3000)).subarray(0, 20_000);
    let sawTemp = false;
    await new Promise<void>((resolve) => {
      const req = http.request({
        host: "127.0.0.1",
        port: server.port,
        method: "POST",
        path: `/api/cases/${caseId}/traces`,
        headers: {
          "Content-Type": `multipart/form-data; boundary=${boundary}`,
          "Content-Length": String(head.length + 60_000),
          Cookie: tech.cookie,
        },
      });
      req.on("error", () => resolve());
      req.on("response", () => resolve());
      req.write(head);
      req.write(body, () => {
        // wait until the server has the part's temp file, then cut the connection
        const dir = path.join(server.dir, "tmp", "uploads");
        const started = Date.now();
        const poll = () => {
          sawTemp = fs.readdirSync(dir).length > 0;
          if (sawTemp || Date.now() - started > 5000) {
            req.destroy();
            resolve();
          } else setTimeout(poll, 5);
        };
        poll();
      });
    });
    expect(sawTemp).toBe(true); // the upload really was under way when it was cut
    // the server notices the closed connection asynchronously; wait (bounded) for its clean-up
    const dir = path.join(server.dir, "tmp", "uploads");
    for (let i = 0; i < 200 && fs.readdirSync(dir).length > 0; i++) await new Promise((r) => setTimeout(r, 10));
    expect(fs.readdirSync(dir)).toEqual([]);
    expect(dataFiles()).toEqual(files);
    expect(await rows()).toEqual(before);
  });

  it("two uploads at once both succeed, and the server answers other requests meanwhile", async () => {
    const a = uploadTrace(tech, csv(3000), "one.csv").then((r: request.Response) => r);
    const b = uploadTrace(tech, csv(3100), "two.csv").then((r: request.Response) => r);
    const health = await request(server.url).get("/api/health");
    expect(health.status).toBe(200);
    const [ra, rb] = await Promise.all([a, b]);
    expect(ra.status).toBe(201);
    expect(rb.status).toBe(201);
    expect(ra.body.samples).toBe(3000);
    expect(rb.body.samples).toBe(3100);
    expect(fs.readdirSync(path.join(server.dir, "tmp", "uploads"))).toEqual([]);
  });
});

describe("photos", () => {
  it.each([
    ["JPEG", JPEG, "image/jpeg"],
    ["PNG", PNG, "image/png"],
    ["WebP", WEBP, "image/webp"],
  ])(
    "accepts a %s by its first bytes, whatever its name and Content-Type, and serves it with its real type",
    async (_l, body, mime) => {
      const res = await uploadPhoto(tech, body, "engine bay.dat", "application/octet-stream");
      expect(res.status, JSON.stringify(res.body)).toBe(201);
      expect(res.body).toMatchObject({
        mime,
        bytes: body.length,
        name: "engine bay.dat",
        url: `/api/photos/${res.body.id}`,
      });
      const got = await tech
        .get(`/api/photos/${res.body.id}`)
        .buffer(true)
        .parse((r, cb) => {
          const chunks: Buffer[] = [];
          r.on("data", (c: Buffer) => chunks.push(c));
          r.on("end", () => cb(null, Buffer.concat(chunks)));
        });
      expect(got.status).toBe(200);
      expect(got.headers["content-type"]).toBe(mime);
      expect(got.headers["x-content-type-options"]).toBe("nosniff");
      expect(Buffer.compare(got.body as Buffer, body)).toBe(0);
      const c = (await tech.get(`/api/cases/${caseId}`)).body;
      expect(c.photos.map((p: { id: unknown }) => p.id)).toContain(res.body.id);
    },
  );

  it.each([
    ["a CSV renamed .jpg and sent as image/jpeg", Buffer.from(csv(10)), "photo.jpg", "image/jpeg"],
    ["a ZIP renamed .png", ZIP, "photo.png", "image/png"],
    ["a GIF (not an accepted type)", Buffer.from("GIF89a" + "\0".repeat(40), "latin1"), "photo.gif", "image/gif"],
    [
      "RIFF audio renamed .webp",
      Buffer.concat([Buffer.from("RIFF"), Buffer.from([40, 0, 0, 0]), Buffer.from("WAVEfmt "), Buffer.alloc(40)]),
      "a.webp",
      "image/webp",
    ],
  ])("refuses %s with 415 and leaves nothing", async (_l, body, name, type) => {
    const res = await expectNothingLeft(() => uploadPhoto(tech, body, name, type), 415);
    expect(res.body.error.code).toBe("unsupported_type");
  });

  it("refuses a photo over MAX_PHOTO_BYTES with 413 and leaves nothing", async () => {
    const big = Buffer.concat([JPEG, Buffer.alloc(PHOTO_LIMIT, 9)]);
    const res = await expectNothingLeft(() => uploadPhoto(tech, big, "big.jpg", "image/jpeg"), 413);
    expect(res.body.error.code).toBe("too_large");
  });

  it("tenant isolation: another shop gets 404, signed out 401, an unclaimed expert 404", async () => {
    const up = await uploadPhoto(tech, PNG, "p.png", "image/png");
    expect(up.status).toBe(201);
    for (const who of [otherTech, otherOwner, expert]) {
      expect((await who.get(`/api/photos/${up.body.id}`)).status).toBe(404);
      expect((await who.delete(`/api/photos/${up.body.id}`)).status).toBe(404);
      await expectNothingLeft(() => uploadPhoto(who, PNG, "p.png", "image/png"), 404);
    }
    const anon = request(server.url);
    expect((await anon.get(`/api/photos/${up.body.id}`)).status).toBe(401);
    await expectNothingLeft(() => uploadPhoto(anon, PNG, "p.png", "image/png"), 401);
    expect((await tech.delete(`/api/photos/${up.body.id}`)).status).toBe(204);
    expect((await tech.get(`/api/photos/${up.body.id}`)).status).toBe(404);
  });
});

describe("magic-byte checks (unit)", () => {
  it("recognises the three image signatures and nothing else", () => {
    expect(detectImageType(JPEG)).toBe("image/jpeg");
    expect(detectImageType(PNG)).toBe("image/png");
    expect(detectImageType(WEBP)).toBe("image/webp");
    expect(detectImageType(Buffer.from([0xff, 0xd8]))).toBeNull(); // too short for the JPEG signature
    expect(detectImageType(Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x00]))).toBeNull(); // last PNG byte wrong
    expect(detectImageType(Buffer.from("RIFF\0\0\0\0WAVE"))).toBeNull();
  });

  it("accepts text with tabs, CR/LF and non-ASCII letters; refuses NUL, control bytes and containers", () => {
    expect(checkTextStart(Buffer.from("Time (µs)\tA (V)\r\n0\t1,5\r\n"))).toEqual({ ok: true });
    expect(checkTextStart(Buffer.from("\ufeffTime,A\n"))).toEqual({ ok: true }); // UTF-8 byte-order mark
    expect(checkTextStart(Buffer.from("Time,A\n0,\u00001\n")).ok).toBe(false);
    expect(checkTextStart(Buffer.from("Time,A\x1b[0m\n")).ok).toBe(false);
    expect(checkTextStart(ZIP).ok).toBe(false);
    expect(checkTextStart(Buffer.from("%PDF-1.7\n")).ok).toBe(false);
  });
});
