/**
 * Who may open a queued case before it is claimed. Project rules (issues 3 and 5): an approved
 * expert looks at a queued case (its page and its traces) to decide whether to claim it; an expert
 * who is not approved, and anyone of another shop, gets 404 as for a missing case; once claimed, only
 * the claiming expert keeps access. A trace uploaded while the case waits for more data moves it back
 * to the expert (needs_data → claimed).
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createExpert, createShopTeam, signIn } from "../factories";
import { caseRow, insertDraftCase, submitAndPay } from "../helpers/queue-flow";

let server: TestServer;
beforeAll(async () => {
  server = await startTestServer();
});
afterAll(async () => server?.close());

const csv =
  "Time (ms),A (V)\n" +
  Array.from({ length: 400 }, (_, i) => `${(i * 0.01).toFixed(2)},${i === 100 ? 8 : 0.2}`).join("\n") +
  "\n";
const settings = JSON.stringify({ kind: "generic", probe: "direct", voltsPerDiv: 2, timePerDivS: 0.0005 });

describe("a queued case before and after the claim", () => {
  it("approved experts see it and its traces; pending experts and other shops get 404; after a claim only the claimer", async () => {
    const team = await createShopTeam(server, { technicians: 1 });
    const tech = await signIn(server, team.technicians[0]);
    const caseId = await insertDraftCase(server, { shopId: team.shop.id, createdBy: team.technicians[0].id });
    const up = await tech
      .post(`/api/cases/${caseId}/traces`)
      .field("settings", settings)
      .attach("file", Buffer.from(csv), "coil1.csv");
    expect(up.status, JSON.stringify(up.body)).toBe(201);
    // a real 1×1 PNG (PNG signature, ISO/IEC 15948): the photo shown on the case page
    const png = Buffer.from(
      "89504e470d0a1a0a0000000d4948445200000001000000010806000000" +
        "1f15c4890000000d49444154789c6360000002000154a24f5d0000000049454e44ae426082",
      "hex",
    );
    const photo = await tech.post(`/api/cases/${caseId}/photos`).attach("file", png, "bay.png");
    expect(photo.status, JSON.stringify(photo.body)).toBe(201);
    await submitAndPay(server, tech, caseId);
    expect((await caseRow(server, caseId)).status).toBe("queued");

    const approved = await createExpert(server, {
      systems: ["ignition"],
      makes: [],
      status: "approved",
      available: true,
    });
    const other = await createExpert(server, { systems: ["ignition"], makes: [], status: "approved", available: true });
    const pending = await createExpert(server, { systems: ["ignition"], makes: [], status: "pending" });
    const stranger = await signIn(server, (await createShopTeam(server, { technicians: 1 })).technicians[0]);
    const a = await signIn(server, approved);
    const o = await signIn(server, other);
    const p = await signIn(server, pending);

    expect((await a.get(`/api/cases/${caseId}`)).status).toBe(200);
    expect((await a.get(`/api/traces/${up.body.id}/window?width=100`)).status).toBe(200);
    expect((await a.get(`/api/photos/${photo.body.id}`)).status).toBe(200);
    expect((await p.get(`/api/cases/${caseId}`)).status).toBe(404);
    expect((await p.get(`/api/photos/${photo.body.id}`)).status).toBe(404);
    expect((await p.get(`/api/traces/${up.body.id}/window?width=100`)).status).toBe(404);
    expect((await stranger.get(`/api/cases/${caseId}`)).status).toBe(404);

    const claim = await a.post(`/api/cases/${caseId}/claim`).set("Origin", server.url);
    expect(claim.status, JSON.stringify(claim.body)).toBe(200);
    expect((await a.get(`/api/cases/${caseId}`)).status).toBe(200);
    expect((await o.get(`/api/cases/${caseId}`)).status).toBe(404);
    expect((await o.get(`/api/traces/${up.body.id}/window?width=100`)).status).toBe(404);
    expect((await o.get(`/api/photos/${photo.body.id}`)).status).toBe(404);

    // The expert asks for another capture; the tech's upload hands the case back.
    const ask = await a
      .post(`/api/cases/${caseId}/request-data`)
      .set("Origin", server.url)
      .send({ message: "Capture coil 2 at 1 ms/div, 2 kV/div" });
    expect(ask.status, JSON.stringify(ask.body)).toBe(200);
    expect((await caseRow(server, caseId)).status).toBe("needs_data");
    const again = await tech
      .post(`/api/cases/${caseId}/traces`)
      .field("settings", settings)
      .attach("file", Buffer.from(csv), "coil2.csv");
    expect(again.status, JSON.stringify(again.body)).toBe(201);
    expect((await caseRow(server, caseId)).status).toBe("claimed");
  });
});
