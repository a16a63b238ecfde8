import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createShopTeam, signIn, type SignedInAgent } from "../factories";

/**
 * The importer behind the upload, on a real listening server: the line bound and binary bytes past
 * the first 8 KB are refused with `trace_unreadable` naming the line and the reason (docs/api.md);
 * a trace keeps its channels' file unit as normalised and where it came from; rows skipped for
 * missing or extra columns come back as a warning naming their count and lines.
 */
let server: TestServer;
let tech: SignedInAgent;
let caseId: string;
const settings = { voltsPerDiv: 2, timePerDivS: 0.001 };

const upload = (body: string, s: unknown = settings) =>
  tech
    .post(`/api/cases/${caseId}/traces`)
    .field("settings", JSON.stringify(s))
    .attach("file", Buffer.from(body), { filename: "capture.csv", contentType: "text/csv" });

beforeAll(async () => {
  server = await startTestServer({ MAX_TRACE_BYTES: String(4 * 1024 * 1024) });
  const a = await createShopTeam(server);
  tech = await signIn(server, a.technicians[0]);
  const res = await tech
    .post("/api/cases")
    .send({ vehicle: { make: "Korrin", model: "Vale" }, complaint: "No start", system: "ignition" });
  caseId = res.body.id;
});
afterAll(async () => {
  await server?.close();
});

describe("trace import through the upload", () => {
  it("a 1 MB line with no line break: 400 trace_unreadable, line 1, line-too-long", async () => {
    const res = await upload("1,".repeat(512 * 1024));
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("trace_unreadable");
    expect(res.body.error.details).toEqual({ reason: "line-too-long", line: 1 });
    expect(res.body.error.message).toMatch(/65,536 characters/);
  });

  it("a NUL byte past the first 8 KB: refused, naming its line", async () => {
    const lines = ["Time (s),A (V)", ...Array.from({ length: 3000 }, (_, i) => `${i * 1e-4},${i % 7}`)];
    lines[2500] = "0.2499,\u00003"; // line 2501 (header = line 1)
    const res = await upload(lines.join("\n"));
    expect(res.status).toBe(400);
    expect(res.body.error.details).toEqual({ reason: "binary-content", line: 2501 });
  });

  it("a units row of words: the unit is kept normalised, with the word the file wrote; skipped rows are reported", async () => {
    const rows = Array.from(
      { length: 400 },
      (_, i) => `${(i * 1e-5).toExponential(4)},${(Math.sin(i / 9) * 4).toFixed(3)}`,
    );
    rows[10] = "1.0e-4"; // line 13 (names = line 1, units = line 2)
    const res = await upload(["X,CH1", "Second,Volt", ...rows].join("\n"));
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    // "Volt" is the volt's name (SI Brochure, 9th ed., Table 4): normalised to its symbol V
    expect(res.body.channels[0]).toMatchObject({ name: "CH1", unit: "V", unitWritten: "Volt", unitFrom: "header" });
    expect(res.body.samples).toBe(399);
    expect(res.body.warnings.join(" ")).toMatch(/skipped 1 row with missing or extra columns: line 13/);
  });
});
