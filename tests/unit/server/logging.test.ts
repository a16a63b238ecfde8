import { describe, expect, test } from "vitest";
import { Writable } from "node:stream";
import { createLogger, logFormat, requestLogLevel } from "../../../server/logging";

/** Collects what a logger writes. */
function sink() {
  const chunks: string[] = [];
  const stream = new Writable({
    write(chunk, _enc, cb) {
      chunks.push(String(chunk));
      cb();
    },
  });
  return { stream, lines: () => chunks.join("").split("\n").filter(Boolean) };
}

// Issue 13 (first run): readable lines in development, JSON in production. "JSON in production"
// means one JSON object per line (pino's documented output, getpino.io "Usage"; the NDJSON format
// log collectors read), with the level as a number (pino: info = 30) and the message under "msg".
describe("logs", () => {
  test("production writes one JSON object per line", async () => {
    const out = sink();
    const log = await createLogger({ NODE_ENV: "production", LOG_LEVEL: "info", LOG_FORMAT: undefined }, out.stream);
    log.info({ caseId: "c1" }, "case published");
    const lines = out.lines();
    expect(lines.length).toBe(1);
    expect(JSON.parse(lines[0])).toMatchObject({ level: 30, msg: "case published", caseId: "c1" });
  });

  test("development writes a readable line, not JSON", async () => {
    const out = sink();
    const log = await createLogger({ NODE_ENV: "development", LOG_LEVEL: "info", LOG_FORMAT: undefined }, out.stream);
    log.info({ caseId: "c1" }, "case published");
    const lines = out.lines();
    expect(lines.length).toBe(1);
    expect(lines[0].trimStart().startsWith("{")).toBe(false);
    expect(lines[0]).toMatch(/INFO.*case published/);
  });

  test("LOG_FORMAT overrides the environment's default", () => {
    expect(logFormat({ NODE_ENV: "development", LOG_FORMAT: "json" })).toBe("json");
    expect(logFormat({ NODE_ENV: "production", LOG_FORMAT: "pretty" })).toBe("pretty");
    expect(logFormat({ NODE_ENV: "test", LOG_FORMAT: undefined })).toBe("json");
  });

  test("successful requests are quiet in development; failures always show", () => {
    const dev = requestLogLevel({ NODE_ENV: "development" });
    const prod = requestLogLevel({ NODE_ENV: "production" });
    const req = {} as never;
    expect(dev(req, { statusCode: 200 })).toBe("debug");
    expect(prod(req, { statusCode: 200 })).toBe("info");
    expect(dev(req, { statusCode: 404 })).toBe("info");
    expect(dev(req, { statusCode: 503 })).toBe("error");
    expect(prod(req, { statusCode: 200 }, new Error("x"))).toBe("error");
  });
});
