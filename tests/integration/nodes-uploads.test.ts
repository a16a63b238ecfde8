/**
 * Uploads on two app nodes sharing a real libSQL server, a real Redis and one data folder.
 *
 * A resumable upload (tus 1.0.0, tus.io/protocols/resumable-upload) whose last byte is on disk but
 * was never read — what a node killed right after the last PATCH leaves — is read when its sender
 * asks where it stands (HEAD). Here the sender's HEADs reach both nodes at once, several times: the
 * capture must be read and stored once (one trace row, one "trace_added" history entry), and the
 * stored samples are the generator's (samples = rate × duration, tests/integration/upload-helpers).
 */
import fs from "node:fs";
import path from "node:path";
import zlib from "node:zlib";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq } from "drizzle-orm";
import { schema } from "../../server/db/client";
import { createShopTeam, signIn, type SignedInAgent } from "../factories/index";
import { nodesMissing, startNodes, type NodeRig } from "../helpers/nodes";
import { captureCsv, encodeMetadata, tusRequest, uploadSettings } from "./upload-helpers";

const missing = nodesMissing();
if (missing) console.warn(`several-node tests skipped: missing ${missing}`);

let rig: NodeRig;
let tech: SignedInAgent;
const capture = captureCsv({ seed: 21 });
const gz = zlib.gzipSync(capture.bytes, { level: 6 });

beforeAll(async () => {
  if (missing) return;
  rig = await startNodes(2);
  const team = await createShopTeam(rig.ctx, { technicians: 1 });
  tech = await signIn(rig.nodes[0], team.technicians[0]);
}, 120_000);
afterAll(async () => rig?.close(), 60_000);

const tracesOf = (caseId: string) =>
  rig.db.read((tx) => tx.select().from(schema.trace).where(eq(schema.trace.caseId, caseId)).all());
const addedEvents = (caseId: string) =>
  rig.db.read((tx) =>
    tx
      .select()
      .from(schema.caseEvent)
      .where(and(eq(schema.caseEvent.caseId, caseId), eq(schema.caseEvent.type, "trace_added")))
      .all(),
  );

describe.skipIf(!!missing)("uploads on two nodes", () => {
  it("a complete upload never read, asked after on both nodes at once, is read and stored once", async () => {
    const created = await tech
      .post("/api/cases")
      .set("Origin", rig.front)
      .send({ vehicle: { make: "Astaro", model: "Dune" }, complaint: "Misfire at idle", system: "ignition" });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const caseId = created.body.id as string;
    const metadata = {
      caseId,
      filename: "coil 3.csv",
      settings: JSON.stringify(uploadSettings),
      encoding: "gzip",
      fileBytes: String(capture.bytes.length),
    };
    const c = await tusRequest(rig.nodes[0], "POST", "/api/uploads", {
      Cookie: tech.cookie,
      Origin: rig.front,
      "Upload-Length": String(gz.length),
      "Upload-Metadata": encodeMetadata(metadata),
    });
    expect(c.status, c.text).toBe(201);
    const loc = c.headers.get("location")!;
    const id = loc.split("/").pop()!;
    // every byte in the shared folder, as a node killed right after the last PATCH leaves it
    fs.writeFileSync(path.join(rig.dir, "tmp", "tus", id), gz);

    const head = (i: number) => tusRequest(rig.nodes[i], "HEAD", loc, { Cookie: tech.cookie, Origin: rig.front });
    const first = await Promise.all([head(0), head(1), head(0), head(1)]);
    for (const h of first) expect(h.headers.get("upload-offset")).toBe(String(gz.length));
    await expect.poll(async () => (await tracesOf(caseId)).length, { timeout: 30_000 }).toBeGreaterThan(0);
    // and again on both while (or after) it is read: nothing is stored a second time
    await Promise.all([head(0), head(1)]);
    await new Promise((r) => setTimeout(r, 1500));
    await Promise.all([head(1), head(0)]);
    await new Promise((r) => setTimeout(r, 1500));

    const rows = await tracesOf(caseId);
    expect(rows).toHaveLength(1);
    expect(rows[0].samples).toBe(capture.samples);
    expect(await addedEvents(caseId)).toHaveLength(1);
    const claim = await rig.db.read((tx) =>
      tx.select().from(schema.uploadClaim).where(eq(schema.uploadClaim.uploadId, id)).get(),
    );
    expect(claim?.traceId).toBe(rows[0].id);
  });
});
