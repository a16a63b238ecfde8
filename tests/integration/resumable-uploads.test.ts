import { afterAll, beforeAll, describe, expect, it } from "vitest";
import crypto from "node:crypto";
import fs from "node:fs";
import http from "node:http";
import path from "node:path";
import zlib from "node:zlib";
import { Readable } from "node:stream";
import { eq } from "drizzle-orm";
import { io as connectClient } from "socket.io-client";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createExpert, createShopTeam, signIn, type SignedInAgent } from "../factories";
import { schema } from "../../server/db/client";
import { reconcileDataFolder } from "../../server/uploads/reconcile";
import type { UploadProgressPayload } from "../../shared/realtime";
import { LinkProxy } from "../e2e/helpers/link-proxy";
import {
  captureCsv,
  dataFiles,
  encodeMetadata,
  tusRequest,
  tusUpload,
  uploadSettings,
  zeroBomb,
} from "./upload-helpers";

/**
 * Resumable uploads (tus 1.0.0, tus.io/protocols/resumable-upload): the client is tus-js-client,
 * the maintained reference client of the protocol, so these tests hold the server to the protocol
 * as that client speaks it. Expected values come from outside the code under test: the generator's
 * parameters (samples = rate × duration), node:crypto's SHA-256 of the file, node:zlib's gzip
 * (RFC 1952) and the protocol's own rules (HEAD reports Upload-Offset; PATCH continues from it).
 */
let server: TestServer;
let tech: SignedInAgent;
let colleague: SignedInAgent;
let otherTech: SignedInAgent;
let expert: SignedInAgent;
let caseA: string;
let caseB: string;
let expertId: string;
const capture = captureCsv();
const gz = zlib.gzipSync(capture.bytes, { level: 6 });

const meta = (caseId: string, extra: Record<string, string> = {}) => ({
  caseId,
  filename: "cyl 4 · coil.csv",
  settings: JSON.stringify(uploadSettings),
  encoding: "gzip",
  fileBytes: String(capture.bytes.length),
  ...extra,
});

async function newCase(agent: SignedInAgent): Promise<string> {
  const res = await agent
    .post("/api/cases")
    .send({ vehicle: { make: "Astaro", model: "Dune" }, complaint: "Misfire at idle", system: "ignition" });
  expect(res.status).toBe(201);
  return res.body.id;
}

const tusFiles = () =>
  fs.existsSync(path.join(server.dir, "tmp", "tus")) ? fs.readdirSync(path.join(server.dir, "tmp", "tus")).sort() : [];
const traceRow = async (id: string) =>
  (await server.ctx.db.read((tx) => tx.select().from(schema.trace).where(eq(schema.trace.id, id)).get()))!;
const sha = (b: Buffer) => crypto.createHash("sha256").update(b).digest("hex");

beforeAll(async () => {
  server = await startTestServer({ MAX_TRACE_BYTES: String(20 * 1024 * 1024) });
  const a = await createShopTeam(server, { technicians: 2 });
  const b = await createShopTeam(server);
  tech = await signIn(server, a.technicians[0]);
  colleague = await signIn(server, a.technicians[1]);
  otherTech = await signIn(server, b.technicians[0]);
  const e = await createExpert(server);
  expertId = e.id;
  expert = await signIn(server, e);
  caseA = await newCase(tech);
  caseB = await newCase(tech);
}, 60_000);
afterAll(async () => {
  await server?.close();
});

describe("a resumable upload", () => {
  it("interrupted at about half and resumed, sends under 10 % twice and stores the same trace as an uninterrupted one", async () => {
    // the uninterrupted upload, straight to the server
    const plain = await tusUpload(server.url, tech.cookie, gz, meta(caseA));
    expect(plain.status).toBe(200);
    const t1 = plain.body.trace;
    // truth from the generator: its sample count and rate; the SHA-256 of the file as the tech has it
    expect(t1).toMatchObject({
      samples: capture.samples,
      sampleRateHz: capture.sampleRateHz,
      sha256: sha(capture.bytes),
      bytes: capture.bytes.length,
    });
    expect(t1.originalName).toBe("cyl 4 · coil.csv");

    // the same file through a link that drops once about half of it has gone over
    const link = await new LinkProxy(server.port).listen();
    try {
      const cut = link.cutAfter(Math.round(gz.length / 2));
      void cut.then(() => setTimeout(() => link.restore(), 300));
      const resumed = await tusUpload(link.url, tech.cookie, gz, meta(caseB));
      expect(resumed.status).toBe(200);
      // it really was cut and resumed: a HEAD asked where to continue, and a PATCH went on from there
      const heads = resumed.requests.filter((r) => r.method === "HEAD");
      expect(heads.length).toBeGreaterThanOrEqual(1);
      const resumedFrom = resumed.requests.filter((r) => r.method === "PATCH").map((r) => Number(r.offset));
      expect(resumedFrom.some((o) => o > 0 && o % (256 * 1024) !== 0)).toBe(true); // not from a chunk boundary: from the server's last byte
      // bytes over the link (bodies and headers) beyond the compressed size: sent twice
      const twice = link.forwarded - gz.length;
      expect(twice).toBeGreaterThanOrEqual(0);
      expect(twice).toBeLessThanOrEqual(0.1 * gz.length);

      const t2 = resumed.body.trace;
      for (const k of [
        "samples",
        "sampleRateHz",
        "t0",
        "durationS",
        "channels",
        "analysis",
        "warnings",
        "sha256",
        "bytes",
        "originalName",
      ]) {
        expect(t2[k], k).toEqual(t1[k]);
      }
      // the stored channel files are the same bytes, and both originals inflate to the file
      const [r1, r2] = [await traceRow(t1.id), await traceRow(t2.id)];
      expect(sha(fs.readFileSync(path.join(server.dir, r2.dataPath)))).toBe(
        sha(fs.readFileSync(path.join(server.dir, r1.dataPath))),
      );
      expect(r2.originalPath).toBe(r1.originalPath);
      expect(zlib.gunzipSync(fs.readFileSync(path.join(server.dir, r2.originalPath))).equals(capture.bytes)).toBe(true);
      // the download is the file as the tech sent it, under the name they gave it
      const dl = await fetch(`${server.url}/api/traces/${t2.id}/original`, { headers: { Cookie: tech.cookie } });
      expect(Buffer.from(await dl.arrayBuffer()).equals(capture.bytes)).toBe(true); // fetch inflates Content-Encoding: gzip
      expect(dl.headers.get("content-disposition")).toContain(
        `filename*=UTF-8''${encodeURIComponent("cyl 4 · coil.csv")}`,
      );
    } finally {
      await link.close();
    }
    // nothing of either upload is left in the upload folder but the two small "finished" markers
    expect(tusFiles().every((f) => f.endsWith(".json"))).toBe(true);
  });

  it("with its length declared only at the end (the browser compresses while it sends), is stored the same", async () => {
    const caseId = await newCase(tech);
    const pieces = [gz.subarray(0, 100_000), gz.subarray(100_000, 300_000), gz.subarray(300_000)];
    // eslint-disable-next-line @typescript-eslint/no-explicit-any -- what the tus client reports, read field by field below
    const result = await new Promise<any>((resolve, reject) => {
      import("tus-js-client").then((tus) => {
        const up = new tus.Upload(Readable.from(pieces), {
          endpoint: `${server.url}/api/uploads`,
          metadata: meta(caseId),
          headers: { Cookie: tech.cookie },
          chunkSize: 128 * 1024,
          uploadLengthDeferred: true,
          storeFingerprintForResuming: false,
          onSuccess: ({ lastResponse }) => resolve(JSON.parse(lastResponse.getBody())),
          onError: reject,
        });
        up.start();
      });
    });
    expect(result.trace).toMatchObject({ samples: capture.samples, sha256: sha(capture.bytes) });
  });

  it("is refused before its first byte when the case, the settings or the sizes are wrong, leaving nothing", async () => {
    const before = tusFiles();
    const post = (m: Record<string, string>, cookie = tech.cookie, length = String(gz.length)) =>
      tusRequest(server, "POST", "/api/uploads", {
        Cookie: cookie,
        "Upload-Length": length,
        "Upload-Metadata": encodeMetadata(m),
      });
    expect((await post(meta(caseA), otherTech.cookie)).status).toBe(404); // another shop's case
    expect((await post(meta(caseA), expert.cookie)).status).toBe(404); // an expert who has not claimed it
    expect(
      (
        await tusRequest(server, "POST", "/api/uploads", {
          "Upload-Length": "10",
          "Upload-Metadata": encodeMetadata(meta(caseA)),
        })
      ).status,
    ).toBe(401);
    const bad = await post(meta(caseA, { settings: JSON.stringify({ voltsPerDiv: -1, timePerDivS: 0.001 }) }));
    expect(bad.status).toBe(400);
    expect(bad.json.error.code).toBe("validation_failed");
    expect((await post(meta(caseA, { fileBytes: String(21 * 1024 * 1024) }))).status).toBe(413);
    expect((await post(meta(caseA), tech.cookie, String(25 * 1024 * 1024))).status).toBe(413); // Upload-Length over the limit
    const submitted = await newCase(tech);
    await server.ctx.db.write((tx) =>
      tx.update(schema.caseTable).set({ status: "queued" }).where(eq(schema.caseTable.id, submitted)).run(),
    );
    const locked = await post(meta(submitted));
    expect(locked.status).toBe(409);
    expect(locked.json.error.code).toBe("case_locked");
    expect(tusFiles()).toEqual(before);
  });
});

describe("a deferred length declared by a piece that was cut", () => {
  it("is declared again with the resumed piece and the upload completes", async () => {
    const c = await tusRequest(server, "POST", "/api/uploads", {
      Cookie: tech.cookie,
      "Upload-Defer-Length": "1",
      "Upload-Metadata": encodeMetadata(meta(caseA)),
    });
    expect(c.status).toBe(201);
    const loc = c.headers.get("location")!;
    const cutAt = Math.floor(gz.length / 2);
    // the last piece, with its Upload-Length (tus creation-defer-length), dropped half-way
    await new Promise<void>((resolve) => {
      const req = http.request({
        host: "127.0.0.1",
        port: server.port,
        method: "PATCH",
        path: loc,
        headers: {
          Cookie: tech.cookie,
          "Tus-Resumable": "1.0.0",
          "Upload-Offset": "0",
          "Upload-Length": String(gz.length),
          "Content-Type": "application/offset+octet-stream",
          "Content-Length": String(gz.length),
        },
      });
      req.on("error", () => resolve());
      req.write(gz.subarray(0, cutAt), () => setTimeout(() => (req.destroy(), resolve()), 300));
    });
    let offset = 0;
    await expect
      .poll(async () => {
        const h = await tusRequest(server, "HEAD", loc, { Cookie: tech.cookie });
        offset = Number(h.headers.get("upload-offset"));
        return h.headers.get("upload-length");
      })
      .toBe(String(gz.length));
    expect(offset).toBeGreaterThan(0);
    const rest = await tusRequest(
      server,
      "PATCH",
      loc,
      {
        Cookie: tech.cookie,
        "Upload-Offset": String(offset),
        "Upload-Length": String(gz.length),
        "Content-Type": "application/offset+octet-stream",
      },
      gz.subarray(offset),
    );
    expect(rest.status, rest.text).toBe(200);
    expect(rest.json.trace.samples).toBe(capture.samples);
  });
});

describe("an upload whose last byte arrived but was never read (the server stopped)", () => {
  it("is read when its sender asks where it stands, and its trace is stored once", async () => {
    const c = await tusRequest(server, "POST", "/api/uploads", {
      Cookie: tech.cookie,
      "Upload-Length": String(gz.length),
      "Upload-Metadata": encodeMetadata(meta(caseA)),
    });
    const loc = c.headers.get("location")!;
    const id = loc.split("/").pop()!;
    // every byte on disk, as a server killed right after the last PATCH leaves it
    fs.writeFileSync(path.join(server.dir, "tmp", "tus", id), gz);
    const head = await tusRequest(server, "HEAD", loc, { Cookie: tech.cookie });
    expect(head.headers.get("upload-offset")).toBe(String(gz.length));
    // eslint-disable-next-line @typescript-eslint/no-explicit-any -- the upload status answer, read field by field below
    let status: any = null;
    await expect
      .poll(
        async () => {
          status = await (await fetch(`${server.url}${loc}`, { headers: { Cookie: tech.cookie } })).json();
          return status.stage;
        },
        { timeout: 20_000 },
      )
      .toBe("stored");
    expect((await traceRow(status.traceId)).samples).toBe(capture.samples);
    // asking again does not store it twice
    const count = async () => (await server.ctx.db.read((tx) => tx.select().from(schema.trace).all())).length;
    const before = await count();
    await tusRequest(server, "HEAD", loc, { Cookie: tech.cookie });
    await new Promise((r) => setTimeout(r, 500));
    expect(await count()).toBe(before);
  });
});

describe("a refusal found while the upload arrives", () => {
  it("is answered to the next piece, before the rest is sent, and nothing of the upload is kept", async () => {
    // a PNG signature (PNG specification, section 5.2) at the start of a "CSV", sent plain
    const png = Buffer.concat([
      Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
      Buffer.alloc(400_000, 7),
    ]);
    const c = await tusRequest(server, "POST", "/api/uploads", {
      Cookie: tech.cookie,
      "Upload-Length": String(png.length),
      "Upload-Metadata": encodeMetadata(meta(caseA, { encoding: "identity", filename: "photo.csv" })),
    });
    const loc = c.headers.get("location")!;
    const id = loc.split("/").pop()!;
    const first = await tusRequest(
      server,
      "PATCH",
      loc,
      { Cookie: tech.cookie, "Upload-Offset": "0", "Content-Type": "application/offset+octet-stream" },
      png.subarray(0, 100_000),
    );
    expect(first.status).toBe(204);
    await expect.poll(() => tusFiles().filter((f) => f.startsWith(id)).length, { timeout: 5000 }).toBe(0);
    const next = await tusRequest(
      server,
      "PATCH",
      loc,
      { Cookie: tech.cookie, "Upload-Offset": "100000", "Content-Type": "application/offset+octet-stream" },
      png.subarray(100_000),
    );
    expect(next.status).toBe(415);
    expect(next.json.error.code).toBe("unsupported_type");
    // someone else still reads it as a missing upload
    expect((await tusRequest(server, "HEAD", loc, { Cookie: otherTech.cookie })).status).toBe(404);
  });
});

describe("tenants and upload ids", () => {
  it("another shop, a colleague and the signed-out get 404 (401) for an upload id; the owner resumes it", async () => {
    const create = await tusRequest(server, "POST", "/api/uploads", {
      Cookie: tech.cookie,
      "Upload-Length": String(gz.length),
      "Upload-Metadata": encodeMetadata(meta(caseA)),
    });
    expect(create.status).toBe(201);
    const loc = create.headers.get("location")!;
    expect(loc).toMatch(/^\/api\/uploads\/[0-9a-f]{32}$/);
    const half = gz.subarray(0, 50_000);
    const patch = (cookie: string, offset: number, body: Buffer) =>
      tusRequest(
        server,
        "PATCH",
        loc,
        { Cookie: cookie, "Upload-Offset": String(offset), "Content-Type": "application/offset+octet-stream" },
        body,
      );
    expect((await patch(tech.cookie, 0, half)).status).toBe(204);

    for (const who of [otherTech, colleague, expert]) {
      expect((await tusRequest(server, "HEAD", loc, { Cookie: who.cookie })).status).toBe(404);
      expect((await patch(who.cookie, 50_000, gz.subarray(50_000, 60_000))).status).toBe(404);
      expect((await tusRequest(server, "DELETE", loc, { Cookie: who.cookie })).status).toBe(404);
      expect((await fetch(`${server.url}${loc}`, { headers: { Cookie: who.cookie } })).status).toBe(404);
    }
    expect((await tusRequest(server, "HEAD", loc, {})).status).toBe(401);
    // a guessed id that does not exist reads the same as someone else's
    expect(
      (
        await tusRequest(server, "HEAD", `/api/uploads/${crypto.randomBytes(16).toString("hex")}`, {
          Cookie: otherTech.cookie,
        })
      ).status,
    ).toBe(404);

    // nothing the others tried changed it: the owner is told 50 000 bytes (tus HEAD: Upload-Offset)
    const head = await tusRequest(server, "HEAD", loc, { Cookie: tech.cookie });
    expect(head.status).toBe(200);
    expect(head.headers.get("upload-offset")).toBe("50000");
    const done = await patch(tech.cookie, 50_000, gz.subarray(50_000));
    expect(done.status).toBe(200);
    expect(done.json.trace.samples).toBe(capture.samples);
  });
});

describe("gzip bombs over the resumable path", () => {
  it("1 GiB of zeros compressed is refused with 413 and the upload is removed", async () => {
    const bombFile = path.join(server.dir, "..", `bomb-${process.pid}.gz`);
    const size = await zeroBomb(bombFile);
    try {
      expect(size).toBeLessThan(2 * 1024 * 1024);
      const files = dataFiles(server.dir);
      const rows = (await server.ctx.db.read((tx) => tx.select().from(schema.trace).all())).length;
      // eslint-disable-next-line @typescript-eslint/no-explicit-any -- the tus client's error with its originalResponse
      const err: any = await tusUpload(
        server.url,
        tech.cookie,
        fs.readFileSync(bombFile),
        meta(caseA, { filename: "zeros.csv", fileBytes: "0" }),
        { chunkSize: 4 * 1024 * 1024 },
      ).catch((e) => e);
      expect(err.status).toBe(413);
      expect(err.body.error).toMatchObject({ code: "too_large", details: { reason: "compression-ratio" } });
      expect(dataFiles(server.dir)).toEqual(files);
      expect((await server.ctx.db.read((tx) => tx.select().from(schema.trace).all())).length).toBe(rows);
    } finally {
      fs.rmSync(bombFile, { force: true });
    }
  });
});

describe("abandoned uploads", () => {
  it("are removed by the reconcile a day after they were created, and logged; a fresh one stays", async () => {
    const create = async () => {
      const c = await tusRequest(server, "POST", "/api/uploads", {
        Cookie: tech.cookie,
        "Upload-Length": String(gz.length),
        "Upload-Metadata": encodeMetadata(meta(caseA)),
      });
      const loc = c.headers.get("location")!;
      await tusRequest(
        server,
        "PATCH",
        loc,
        { Cookie: tech.cookie, "Upload-Offset": "0", "Content-Type": "application/offset+octet-stream" },
        gz.subarray(0, 30_000),
      );
      return loc.split("/").pop()!;
    };
    const old = await create();
    const fresh = await create();
    // the one left for a day: its creation date moved back 25 hours (UPLOAD_EXPIRY_HOURS is 24)
    const infoFile = path.join(server.dir, "tmp", "tus", `${old}.json`);
    const info = JSON.parse(fs.readFileSync(infoFile, "utf8"));
    fs.writeFileSync(
      infoFile,
      JSON.stringify({ ...info, creation_date: new Date(Date.now() - 25 * 3600_000).toISOString() }),
    );
    const logged: unknown[] = [];
    const logger = server.ctx.logger;
    const spy = { ...logger, info: (...a: unknown[]) => logged.push(a), debug: () => {} } as never;
    const removed = await reconcileDataFolder({ ...server.ctx, logger: spy });
    expect(
      removed
        .filter((r) => r.why === "abandoned upload")
        .map((r) => r.path)
        .sort(),
    ).toEqual([`tmp/tus/${old}`, `tmp/tus/${old}.json`]);
    expect(logged.length).toBe(1);
    expect(tusFiles()).toEqual(expect.arrayContaining([fresh, `${fresh}.json`]));
    expect(tusFiles()).not.toContain(old);
    expect((await tusRequest(server, "HEAD", `/api/uploads/${old}`, { Cookie: tech.cookie })).status).toBe(404);
    expect(
      (await tusRequest(server, "HEAD", `/api/uploads/${fresh}`, { Cookie: tech.cookie })).headers.get("upload-offset"),
    ).toBe("30000");
  });
});

describe("progress on the case room", () => {
  it("the expert's socket sees the capture arrive, get checked and measured, and stored", async () => {
    const caseId = await newCase(tech);
    await server.ctx.db.write((tx) =>
      tx
        .update(schema.caseTable)
        .set({ status: "claimed", expertId, claimedAt: new Date() })
        .where(eq(schema.caseTable.id, caseId))
        .run(),
    );
    const socket = connectClient(server.url, {
      transports: ["websocket"],
      extraHeaders: { Cookie: expert.cookie },
      reconnection: false,
    });
    const seen: UploadProgressPayload[] = [];
    socket.on("upload:progress", (p) => seen.push(p));
    try {
      const joined: { ok: boolean } = await new Promise((resolve) =>
        socket.emit("case:join", { caseId, since: 0 }, resolve),
      );
      expect(joined.ok, JSON.stringify(joined)).toBe(true);
      const res = await tusUpload(server.url, tech.cookie, gz, meta(caseId), { chunkSize: 64 * 1024 });
      await new Promise((r) => setTimeout(r, 100));
      const stages = seen.map((p) => p.stage);
      expect(stages[0]).toBe("sending");
      expect(stages).toContain("checking");
      expect(stages).toContain("measuring");
      expect(stages.at(-1)).toBe("stored");
      const last = seen.at(-1)!;
      expect(last).toMatchObject({
        caseId,
        traceId: res.body.trace.id,
        name: "cyl 4 · coil.csv",
        compressed: true,
        fileBytes: capture.bytes.length,
      });
      // bytes were reported as they arrived, never more than were sent
      const sending = seen.filter((p) => p.stage === "sending").map((p) => p.receivedBytes);
      expect(Math.max(...sending)).toBeLessThanOrEqual(gz.length);
    } finally {
      socket.close();
    }
  });
});
