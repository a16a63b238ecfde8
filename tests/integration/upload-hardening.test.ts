import { afterAll, beforeAll, describe, expect, it } from "vitest";
import crypto from "node:crypto";
import fs from "node:fs";
import http from "node:http";
import path from "node:path";
import zlib from "node:zlib";
import { sql } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createShopTeam, signIn, type SignedInAgent } from "../factories";
import { schema } from "../../server/db/client";
import { captureCsv, dataFiles, uploadSettings, zeroBomb } from "./upload-helpers";

/**
 * The multipart endpoint as API clients use it, against what a hostile or unlucky client sends.
 * Outside references: multipart/form-data is RFC 7578 (a part's `filename` parameter carries the
 * name as the browser has it; HTML's form submission algorithm writes it as raw UTF-8), gzip is
 * RFC 1952 and node:zlib is the reference codec, the download's name follows RFC 6266 / RFC 8187
 * (`filename*=UTF-8''…` percent-encoded). The capture's truth is the generator's parameters.
 */
let server: TestServer;
let tech: SignedInAgent;
let caseId: string;
const capture = captureCsv({ seed: 9 });
const settingsJson = JSON.stringify(uploadSettings);
const BOUNDARY = "----burnline-hardening";

const rows = async () =>
  (await server.ctx.db.read((tx) =>
    tx
      .select({ n: sql<number>`count(*)` })
      .from(schema.trace)
      .get(),
  ))!.n;

/** A multipart body by hand: the settings field, then the file part with the given header lines. */
function multipart(
  file: Buffer,
  filenameHeader: string,
  opts: { closing?: boolean; contentType?: string } = {},
): Buffer {
  return Buffer.concat([
    Buffer.from(`--${BOUNDARY}\r\nContent-Disposition: form-data; name="settings"\r\n\r\n${settingsJson}\r\n`),
    Buffer.from(`--${BOUNDARY}\r\nContent-Disposition: form-data; name="file"; filename="`),
    Buffer.from(filenameHeader, "utf8"),
    Buffer.from(`"\r\nContent-Type: ${opts.contentType ?? "text/csv"}\r\n\r\n`),
    file,
    Buffer.from(opts.closing === false ? "\r\n" : `\r\n--${BOUNDARY}--\r\n`),
  ]);
}

/** POST to the multipart endpoint with raw headers and body; the answer's status and JSON. */
function post(
  body: Buffer | (() => AsyncIterable<Buffer>),
  headers: Record<string, string>,
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- the JSON answer (or its text), read field by field
): Promise<{ status: number; body: any }> {
  return new Promise((resolve, reject) => {
    const req = http.request(
      {
        host: "127.0.0.1",
        port: server.port,
        method: "POST",
        path: `/api/cases/${caseId}/traces`,
        headers: { Cookie: tech.cookie, ...headers },
      },
      (res) => {
        const chunks: Buffer[] = [];
        res.on("data", (c) => chunks.push(c));
        res.on("end", () => {
          const text = Buffer.concat(chunks).toString("utf8");
          let json: unknown;
          try {
            json = JSON.parse(text);
          } catch {
            json = text;
          }
          resolve({ status: res.statusCode ?? 0, body: json });
        });
      },
    );
    req.on("error", reject);
    if (Buffer.isBuffer(body)) req.end(body);
    else
      (async () => {
        for await (const c of body()) if (!req.write(c)) await new Promise((r) => req.once("drain", r));
        req.end();
      })().catch(reject);
  });
}

const mp = (
  file: Buffer,
  name = "capture.csv",
  extra: Record<string, string> = {},
  opts: Parameters<typeof multipart>[2] = {},
) => post(multipart(file, name, opts), { "Content-Type": `multipart/form-data; boundary=${BOUNDARY}`, ...extra });

// eslint-disable-next-line @typescript-eslint/no-explicit-any -- the JSON answer, read field by field
async function expectNothingLeft(run: () => Promise<{ status: number; body: any }>, status: number, code: string) {
  const files = dataFiles(server.dir);
  const before = await rows();
  const res = await run();
  expect(res.status, JSON.stringify(res.body)).toBe(status);
  expect(res.body.error.code).toBe(code);
  expect(dataFiles(server.dir)).toEqual(files);
  expect(await rows()).toBe(before);
  return res;
}

beforeAll(async () => {
  server = await startTestServer();
  const a = await createShopTeam(server);
  tech = await signIn(server, a.technicians[0]);
  const res = await tech
    .post("/api/cases")
    .send({ vehicle: { make: "Korrin", model: "Vale" }, complaint: "No start", system: "ignition" });
  caseId = res.body.id;
  expect((await mp(capture.bytes, "first.csv")).status).toBe(201); // so "nothing left" is judged against a folder with content
}, 60_000);
afterAll(async () => {
  await server?.close();
});

describe("a gzip body", () => {
  it("as a .gz file or as Content-Encoding: gzip is parsed to the same channels as the plain file", async () => {
    const plain = await mp(capture.bytes, "coil.csv");
    const gzFile = await mp(zlib.gzipSync(capture.bytes), "coil.csv.gz", {}, { contentType: "application/gzip" });
    const encoded = await post(zlib.gzipSync(multipart(capture.bytes, "coil.csv")), {
      "Content-Type": `multipart/form-data; boundary=${BOUNDARY}`,
      "Content-Encoding": "gzip",
    });
    for (const r of [plain, gzFile, encoded]) expect(r.status, JSON.stringify(r.body)).toBe(201);
    const [a, b, c] = [plain.body, gzFile.body, encoded.body];
    // the generator's truth, and the SHA-256 (node:crypto) of the plain file for all three
    const sha = crypto.createHash("sha256").update(capture.bytes).digest("hex");
    for (const t of [a, b, c]) {
      expect(t).toMatchObject({
        samples: capture.samples,
        sampleRateHz: capture.sampleRateHz,
        sha256: sha,
        bytes: capture.bytes.length,
      });
      expect(t.channels).toEqual(a.channels);
      expect(t.analysis).toEqual(a.analysis);
    }
    const w = async (id: string) => (await tech.get(`/api/traces/${id}/window?width=500`)).body;
    expect(await w(b.id)).toEqual(await w(a.id));
    expect(await w(c.id)).toEqual(await w(a.id));
    expect(b.name).toBe("coil.csv"); // the trace's name drops the compression
    expect(b.originalName).toBe("coil.csv.gz");

    // downloads as sent: the .gz file comes back as that file; the plain one as plain text
    const gzDl = await fetch(`${server.url}/api/traces/${b.id}/original`, { headers: { Cookie: tech.cookie } });
    expect(gzDl.headers.get("content-type")).toBe("application/gzip");
    expect(gzDl.headers.get("content-disposition")).toMatch(/filename="coil\.csv\.gz"/);
    expect(zlib.gunzipSync(Buffer.from(await gzDl.arrayBuffer())).equals(capture.bytes)).toBe(true);
    const plainDl = await new Promise<{ headers: http.IncomingHttpHeaders; body: Buffer }>((resolve) => {
      // no Accept-Encoding: the server inflates the stored copy itself
      http.get(
        {
          host: "127.0.0.1",
          port: server.port,
          path: `/api/traces/${a.id}/original`,
          headers: { Cookie: tech.cookie },
        },
        (res) => {
          const chunks: Buffer[] = [];
          res.on("data", (x) => chunks.push(x));
          res.on("end", () => resolve({ headers: res.headers, body: Buffer.concat(chunks) }));
        },
      );
    });
    expect(plainDl.headers["content-encoding"]).toBeUndefined();
    expect(plainDl.headers["content-type"]).toMatch(/^text\/csv/);
    expect(plainDl.body.equals(capture.bytes)).toBe(true);
  });

  it("that is a bomb (1 GiB of zeros) is refused with 413 and leaves nothing, as a file or as the body's encoding", async () => {
    const bombFile = path.join(server.dir, "..", `mp-bomb-${process.pid}.gz`);
    await zeroBomb(bombFile);
    try {
      const bomb = fs.readFileSync(bombFile);
      const r1 = await expectNothingLeft(() => mp(bomb, "zeros.csv.gz"), 413, "too_large");
      expect(r1.body.error.details.reason).toBe("compression-ratio");
      // the whole multipart body gzip-compressed around 1 GiB of zeros, streamed through gzip
      const encoded = zlib.gzipSync(Buffer.concat([multipart(Buffer.alloc(0), "zeros.csv", { closing: false })]));
      const tail = zlib.gzipSync(Buffer.from(`\r\n--${BOUNDARY}--\r\n`));
      // concatenated gzip members read as one stream (RFC 1952 section 2.2): header part, the zeros, the tail
      const r2 = await expectNothingLeft(
        () =>
          post(Buffer.concat([encoded, bomb, tail]), {
            "Content-Type": `multipart/form-data; boundary=${BOUNDARY}`,
            "Content-Encoding": "gzip",
          }),
        413,
        "too_large",
      );
      expect(r2.body.error.details.reason).toBe("compression-ratio");
    } finally {
      fs.rmSync(bombFile, { force: true });
    }
  });

  it("that is damaged or cut short is 400 bad_upload", async () => {
    const gz = zlib.gzipSync(capture.bytes);
    await expectNothingLeft(() => mp(gz.subarray(0, gz.length >> 1), "cut.csv.gz"), 400, "bad_upload");
  });
});

describe("malformed multipart answers 400 bad_upload, never 500", () => {
  const type = `multipart/form-data; boundary=${BOUNDARY}`;
  it.each([
    [
      "a missing closing boundary",
      () => post(multipart(capture.bytes.subarray(0, 2000), "a.csv", { closing: false }), { "Content-Type": type }),
    ],
    [
      "no boundary parameter",
      () => post(multipart(capture.bytes.subarray(0, 2000), "a.csv"), { "Content-Type": "multipart/form-data" }),
    ],
    [
      "a NUL in a part header",
      () =>
        post(
          Buffer.from(
            `--${BOUNDARY}\r\nContent-Dis\0position: form-data; name="file"; filename="a.csv"\r\n\r\n1,2\r\n--${BOUNDARY}--\r\n`,
          ),
          { "Content-Type": type },
        ),
    ],
    [
      "a body that is not multipart (JSON)",
      () => post(Buffer.from(JSON.stringify({ settings: settingsJson })), { "Content-Type": "application/json" }),
    ],
    ["a raw CSV body", () => post(capture.bytes.subarray(0, 2000), { "Content-Type": "text/csv" })],
  ])("%s", async (_label, run) => {
    await expectNothingLeft(run, 400, "bad_upload");
  });

  it("the photo endpoint too (the same multipart reading)", async () => {
    const cut = Buffer.from(
      `--${BOUNDARY}\r\nContent-Disposition: form-data; name="file"; filename="a.jpg"\r\nContent-Type: image/jpeg\r\n\r\n\xff\xd8\xff\xe0`,
      "latin1",
    );
    // eslint-disable-next-line @typescript-eslint/no-explicit-any -- the JSON answer, read field by field
    const res = await new Promise<{ status: number; body: any }>((resolve) => {
      const req = http.request(
        {
          host: "127.0.0.1",
          port: server.port,
          method: "POST",
          path: `/api/cases/${caseId}/photos`,
          headers: { Cookie: tech.cookie, "Content-Type": type },
        },
        (r) => {
          const chunks: Buffer[] = [];
          r.on("data", (c) => chunks.push(c));
          r.on("end", () =>
            resolve({ status: r.statusCode ?? 0, body: JSON.parse(Buffer.concat(chunks).toString("utf8")) }),
          );
        },
      );
      req.end(cut);
    });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("bad_upload");
  });
});

describe("file names", () => {
  it("a raw UTF-8 filename (what browsers send) is stored and shown as the user named it", async () => {
    const name = "Zündung Zyl. 4 – Leerlauf µs 點火.csv";
    const res = await mp(capture.bytes.subarray(0, capture.bytes.indexOf("\n", 200_000) + 1), name);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.originalName).toBe(name);
    expect(res.body.name).toBe(name);
    const again = await tech.get(`/api/traces/${res.body.id}`);
    expect(again.body.originalName).toBe(name);
    const dl = await fetch(`${server.url}/api/traces/${res.body.id}/original`, { headers: { Cookie: tech.cookie } });
    // RFC 8187 ext-value: UTF-8, percent-encoded
    expect(dl.headers.get("content-disposition")).toContain(`filename*=UTF-8''${encodeURIComponent(name)}`);
  });
});

describe("a one-line CSV within the size limit", () => {
  it("is refused with trace_unreadable while the health endpoint keeps answering within 250 ms", async () => {
    // 100 MB of "1,1,1,…" without a newline (the attack in the hardening issue)
    const MB = 1024 * 1024;
    const piece = Buffer.from("1,".repeat(MB / 2));
    const head = Buffer.from(
      `--${BOUNDARY}\r\nContent-Disposition: form-data; name="settings"\r\n\r\n${settingsJson}\r\n--${BOUNDARY}\r\nContent-Disposition: form-data; name="file"; filename="line.csv"\r\nContent-Type: text/csv\r\n\r\n`,
    );
    const tail = Buffer.from(`\r\n--${BOUNDARY}--\r\n`);
    async function* body() {
      yield head;
      for (let i = 0; i < 100; i++) yield piece;
      yield tail;
    }
    const files = dataFiles(server.dir);
    let done = false;
    const latencies: number[] = [];
    const poll = (async () => {
      while (!done) {
        const t = performance.now();
        const r = await fetch(`${server.url}/api/health`);
        await r.arrayBuffer();
        latencies.push(performance.now() - t);
        await new Promise((x) => setTimeout(x, 50));
      }
    })();
    const res = await post(body, {
      "Content-Type": `multipart/form-data; boundary=${BOUNDARY}`,
      "Content-Length": String(head.length + 100 * piece.length + tail.length),
    }).finally(() => {
      done = true;
    });
    await poll;
    expect(res.status, JSON.stringify(res.body)).toBe(400);
    expect(res.body.error.code).toBe("trace_unreadable");
    expect(latencies.length).toBeGreaterThan(0);
    expect(Math.max(...latencies)).toBeLessThan(250);
    expect(dataFiles(server.dir)).toEqual(files);
  }, 180_000);
});
