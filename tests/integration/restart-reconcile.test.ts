import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { spawn, type ChildProcess } from "node:child_process";
import crypto from "node:crypto";
import fs from "node:fs";
import http from "node:http";
import os from "node:os";
import path from "node:path";
import zlib from "node:zlib";
import { pathToFileURL } from "node:url";
import { pino } from "pino";
import { startServer } from "../../server/index";
import { createShopTeam, signIn } from "../factories";
import { captureCsv, encodeMetadata, tusRequest, uploadSettings } from "./upload-helpers";

/**
 * A server killed with SIGKILL in the middle of uploads, then started again on the same data
 * folder (the hardening issue's item 2). The server runs in a child process so that the kill is
 * real: no handler runs, no temp file is removed. What a crash leaves at the other points of an
 * upload (a channel file half-written, a complete channel file or original whose row was never
 * committed) is placed by hand the way writeTraceData and the pipeline name them.
 */
const dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-restart-"));
const env = {
  ...process.env,
  NODE_ENV: "test",
  PORT: "0",
  HOST: "127.0.0.1",
  DATABASE_URL: path.join(dir, "test.db"),
  DATA_DIR: dir,
  MAIL_CATCHER_PORT: "0",
  FAKE_STRIPE_PORT: "0",
  LOG_LEVEL: "info",
  DEMO: "false",
};
const script = path.join(dir, "child-server.mts");
let cookie = "";
let caseId = "";
let keptTraceId = "";
let uploadPath = "";
const capture = captureCsv({ seed: 5 });
const gz = zlib.gzipSync(capture.bytes);

interface Child {
  proc: ChildProcess;
  port: number;
  lines: string[];
}

function startChild(): Promise<Child> {
  return new Promise((resolve, reject) => {
    const proc = spawn(process.execPath, ["--import", "tsx", script], { env, stdio: ["ignore", "pipe", "pipe"] });
    const lines: string[] = [];
    let buf = "";
    proc.stdout!.on("data", (d: Buffer) => {
      buf += d.toString("utf8");
      let i: number;
      while ((i = buf.indexOf("\n")) >= 0) {
        const line = buf.slice(0, i);
        buf = buf.slice(i + 1);
        lines.push(line);
        const m = /^LISTENING (\d+)$/.exec(line);
        if (m) resolve({ proc, port: Number(m[1]), lines });
      }
    });
    proc.stderr!.on("data", (d: Buffer) => lines.push(`stderr: ${d}`));
    proc.on("exit", (code) => reject(new Error(`child exited (${code}): ${lines.join("\n")}`)));
  });
}

function killHard(c: Child): Promise<void> {
  return new Promise((resolve) => {
    c.proc.removeAllListeners("exit");
    c.proc.once("exit", () => resolve());
    c.proc.kill("SIGKILL");
  });
}

const files = (sub: string) => {
  const p = path.join(dir, sub);
  return fs.existsSync(p)
    ? (fs.readdirSync(p, { recursive: true }) as string[]).filter((f) => fs.statSync(path.join(p, f)).isFile()).sort()
    : [];
};

beforeAll(async () => {
  const serverIndex = pathToFileURL(path.resolve("server/index.ts")).href;
  fs.writeFileSync(
    script,
    `import { startServer } from ${JSON.stringify(serverIndex)};\nconst s = await startServer();\nconsole.log("LISTENING " + s.port);\n`,
  );
  // the accounts, a case and one stored trace, made by a server in this process that stops cleanly
  const setup = await startServer({ ...env, LOG_LEVEL: "silent" } as Record<string, string>, pino({ level: "silent" }));
  try {
    const team = await createShopTeam(setup);
    const tech = await signIn(setup, team.technicians[0]);
    cookie = tech.cookie;
    caseId = (
      await tech
        .post("/api/cases")
        .send({ vehicle: { make: "Korrin", model: "Vale" }, complaint: "No start", system: "ignition" })
    ).body.id;
    const up = await tech
      .post(`/api/cases/${caseId}/traces`)
      .field("settings", JSON.stringify(uploadSettings))
      .attach("file", capture.bytes, "kept.csv");
    expect(up.status).toBe(201);
    keptTraceId = up.body.id;
  } finally {
    await setup.close();
  }
}, 120_000);

afterAll(() => {
  fs.rmSync(dir, { recursive: true, force: true });
});

describe("kill -9 during uploads, then a restart on the same data folder", () => {
  it("removes temp files and files no row references, logs them, and keeps stored traces and resumable uploads", async () => {
    const keptFiles = [
      ...files("traces").map((f) => `traces/${f}`),
      ...files("originals").map((f) => `originals/${f}`),
    ];
    expect(keptFiles).toHaveLength(2);
    const first = await startChild();
    let multipart: http.ClientRequest | null = null;
    try {
      const srv = { port: first.port };
      // a resumable upload half sent
      const created = await tusRequest(srv, "POST", "/api/uploads", {
        Cookie: cookie,
        "Upload-Length": String(gz.length),
        "Upload-Metadata": encodeMetadata({
          caseId,
          filename: "resumed.csv",
          settings: JSON.stringify(uploadSettings),
          encoding: "gzip",
        }),
      });
      expect(created.status).toBe(201);
      uploadPath = created.headers.get("location")!;
      const half = Math.floor(gz.length / 2);
      const p1 = await tusRequest(
        srv,
        "PATCH",
        uploadPath,
        { Cookie: cookie, "Upload-Offset": "0", "Content-Type": "application/offset+octet-stream" },
        gz.subarray(0, half),
      );
      expect(p1.status).toBe(204);

      // a multipart upload under way: its temp file exists when the server dies
      const B = "----restart";
      multipart = http.request({
        host: "127.0.0.1",
        port: first.port,
        method: "POST",
        path: `/api/cases/${caseId}/traces`,
        headers: {
          Cookie: cookie,
          "Content-Type": `multipart/form-data; boundary=${B}`,
          "Content-Length": String(capture.bytes.length + 1000),
        },
      });
      multipart.on("error", () => {});
      multipart.write(
        `--${B}\r\nContent-Disposition: form-data; name="settings"\r\n\r\n${JSON.stringify(uploadSettings)}\r\n`,
      );
      multipart.write(
        `--${B}\r\nContent-Disposition: form-data; name="file"; filename="cut.csv"\r\nContent-Type: text/csv\r\n\r\n`,
      );
      multipart.write(capture.bytes.subarray(0, 200_000));
      for (
        let i = 0;
        i < 200 && !files("tmp/uploads").some((f) => fs.statSync(path.join(dir, "tmp/uploads", f)).size > 0);
        i++
      ) {
        await new Promise((r) => setTimeout(r, 20));
      }
      expect(files("tmp/uploads")).toHaveLength(1);
    } finally {
      await killHard(first);
      multipart?.destroy();
    }

    // what a crash leaves at the pipeline's other points, named as the code names them
    const orphanId = crypto.randomUUID();
    const keptData = keptFiles.find((f) => f.startsWith("traces/"))!;
    fs.writeFileSync(
      path.join(dir, "traces", `${crypto.randomUUID()}.trace.1a2b3c4d5e6f.tmp`),
      crypto.randomBytes(5000),
    ); // writeTraceData mid-write
    fs.copyFileSync(path.join(dir, keptData), path.join(dir, "traces", `${orphanId}.trace`)); // stored, row never committed
    const other = zlib.gzipSync(Buffer.from("Time (s),A (V)\n0,1\n0.001,2\n"));
    const otherSha = crypto.createHash("sha256").update("Time (s),A (V)\n0,1\n0.001,2\n").digest("hex");
    fs.mkdirSync(path.join(dir, "originals", otherSha.slice(0, 2)), { recursive: true });
    fs.writeFileSync(path.join(dir, "originals", otherSha.slice(0, 2), `${otherSha}.gz`), other); // placed, row never committed
    const leftovers = [
      ...files("tmp/uploads").map((f) => `tmp/uploads/${f}`),
      ...files("traces")
        .filter((f) => f.endsWith(".tmp") || f.startsWith(orphanId))
        .map((f) => `traces/${f}`),
      `originals/${otherSha.slice(0, 2)}/${otherSha}.gz`,
    ].sort();
    expect(leftovers).toHaveLength(4);
    const tusBefore = files("tmp/tus");
    expect(tusBefore).toHaveLength(2);

    const second = await startChild();
    try {
      // the start-up reconcile: its log line lists what it removed
      const log = second.lines
        .map((l) => (l.startsWith("{") ? JSON.parse(l) : null))
        .find((l) => l && /data folder reconciled/.test(l.msg));
      expect(log, second.lines.join("\n")).toBeTruthy();
      expect(log.removed.map((r: { path: string }) => r.path).sort()).toEqual(leftovers);
      for (const f of leftovers) expect(fs.existsSync(path.join(dir, f)), f).toBe(false);
      // kept: the stored trace's files, and the resumable upload (it is not a day old)
      for (const f of keptFiles) expect(fs.existsSync(path.join(dir, f)), f).toBe(true);
      expect(files("tmp/tus")).toEqual(tusBefore);

      const srv = { port: second.port };
      const window = await fetch(`http://127.0.0.1:${second.port}/api/traces/${keptTraceId}/window?width=100`, {
        headers: { Cookie: cookie },
      });
      expect(window.status).toBe(200);
      // the half-sent upload continues from where the server has it (tus HEAD → Upload-Offset)
      const head = await tusRequest(srv, "HEAD", uploadPath, { Cookie: cookie });
      const offset = Number(head.headers.get("upload-offset"));
      expect(offset).toBe(Math.floor(gz.length / 2));
      const rest = await tusRequest(
        srv,
        "PATCH",
        uploadPath,
        { Cookie: cookie, "Upload-Offset": String(offset), "Content-Type": "application/offset+octet-stream" },
        gz.subarray(offset),
      );
      expect(rest.status, rest.text).toBe(200);
      expect(rest.json.trace).toMatchObject({
        samples: capture.samples,
        sampleRateHz: capture.sampleRateHz,
        originalName: "resumed.csv",
      });
    } finally {
      await killHard(second);
    }
  }, 120_000);
});
