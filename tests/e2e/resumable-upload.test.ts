import { afterAll, beforeAll, describe, expect, test } from "vitest";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { eq } from "drizzle-orm";
import type { Page } from "playwright-core";
import { schema } from "../../server/db/client";
import { createExpert, createShopTeam, signIn } from "../factories";
import { FACTORY_PASSWORD } from "../../demo/builders/users";
import { generateSecondary, renderCsv } from "../../demo/generators";
import {
  launchBrowser,
  screenshotDir,
  shot,
  signInThroughPage,
  startE2EServer,
  watchErrors,
  type E2EServer,
  type LaunchedBrowser,
} from "./helpers/browser";
import { LinkProxy } from "./helpers/link-proxy";

/**
 * The uploads issue's browser criterion: the technician's page reaches the server through a
 * loopback link limited to 20 Mbit/s (a rate-limited proxy, helpers/link-proxy.ts); a 40 MB
 * capture is chosen, the link is cut once about half of the compressed bytes have gone over and
 * restored a few seconds later; the upload goes on from where the server had it, and the trace
 * appears on the expert's screen (another browser context, straight to the server). The capture's
 * truth is the generator's: its sample count. Screenshots: test-results/e2e/resumable-upload/.
 */
const RATE = (20e6 / 8) as number; // 20 Mbit/s in bytes per second
let server: E2EServer;
let link: LinkProxy;
let launched: LaunchedBrowser;
let fileDir: string;
let file: string;
let samples = 0;
const errors: string[] = [];
const SHOTS = screenshotDir("resumable-upload");

beforeAll(async () => {
  link = await new LinkProxy(0, { rateBytesPerS: RATE }).listen();
  server = await startE2EServer({ PUBLIC_URL: link.url, MAX_TRACE_BYTES: String(60 * 1024 * 1024) });
  link.setTarget(server.port);
  launched = await launchBrowser();
  // ≈ 40 MB: a secondary-ignition capture at 1 MS/s, long enough for the size
  fileDir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-e2e-resumable-"));
  const g = generateSecondary({ seed: 41, sampleRateHz: 1e6, durationS: 2.3, events: 14 });
  samples = g.trace.samples;
  file = path.join(fileDir, "coil 3 idle.csv");
  fs.writeFileSync(file, renderCsv(g.trace, { digits: 5 }));
}, 180_000);

/** A claimed case of a new shop, its technician signed in through the link, the expert directly. */
async function claimedCase() {
  const team = await createShopTeam(server, { technician: { name: "Jordan Keane" } });
  const e = await createExpert(server, { name: "Quinn Haddad" });
  const api = await signIn(server, team.technicians[0]);
  const created = await api.post("/api/cases").send({
    vehicle: { make: "Veltra", model: "Sorrel", year: 2019 },
    complaint: "Misfire when warm",
    system: "ignition",
  });
  const caseId = created.body.id as string;
  await server.ctx.db.write((tx) =>
    tx
      .update(schema.caseTable)
      .set({ status: "claimed", expertId: e.id, claimedAt: new Date() })
      .where(eq(schema.caseTable.id, caseId))
      .run(),
  );
  const techCtx = await launched.browser.newContext({ viewport: { width: 1280, height: 900 } });
  watchErrors(techCtx, errors, "tech");
  const tech = await techCtx.newPage();
  await signInThroughPage(tech, link.url, team.technicians[0].email, FACTORY_PASSWORD);
  await tech.goto(`${link.url}/cases/${caseId}`);
  await tech.getByRole("region", { name: "Add traces" }).waitFor({ timeout: 30_000 });
  return { caseId, techCtx, tech };
}

/** A smaller capture file (`seconds` at 1 MS/s) for the queue and reload cases. */
function smallCapture(name: string, seconds: number, seed: number): { file: string; samples: number } {
  const g = generateSecondary({
    seed,
    sampleRateHz: 1e6,
    durationS: seconds,
    events: Math.max(1, Math.floor(seconds / 0.16)),
  });
  const f = path.join(fileDir, name);
  fs.writeFileSync(f, renderCsv(g.trace, { digits: 5 }));
  return { file: f, samples: g.trace.samples };
}

async function fillSettings(card: ReturnType<Page["getByRole"]>) {
  await card.getByText("Ready to upload").waitFor({ timeout: 30_000 });
  await card.getByRole("combobox", { name: "Kind of capture" }).selectOption({ label: "Secondary ignition" });
  await card.getByRole("textbox", { name: /^Vertical \(V\/div\)/ }).fill("0.2");
  await card.getByRole("textbox", { name: /^Time \/ div/ }).fill("20");
  await card.getByRole("combobox", { name: "Time unit" }).selectOption("ms");
}

afterAll(async () => {
  await launched?.close();
  await server?.close();
  await link?.close();
  if (fileDir) fs.rmSync(fileDir, { recursive: true, force: true });
});

describe("a large capture over a link that drops", () => {
  test("uploads, resumes after the cut, and appears on the expert's screen", async () => {
    const size = fs.statSync(file).size;
    expect(size).toBeGreaterThan(38e6);
    expect(size).toBeLessThan(46e6);
    const team = await createShopTeam(server, { technician: { name: "Robin Marsh" } });
    const e = await createExpert(server, { name: "Sam Okafor" });
    const api = await signIn(server, team.technicians[0]);
    const created = await api.post("/api/cases").send({
      vehicle: { make: "Veltra", model: "Sorrel", year: 2019 },
      complaint: "Misfire when warm",
      system: "ignition",
    });
    const caseId = created.body.id as string;
    await server.ctx.db.write((tx) =>
      tx
        .update(schema.caseTable)
        .set({ status: "claimed", expertId: e.id, claimedAt: new Date() })
        .where(eq(schema.caseTable.id, caseId))
        .run(),
    );

    const techCtx = await launched.browser.newContext({ viewport: { width: 1280, height: 900 } });
    const expCtx = await launched.browser.newContext({ viewport: { width: 1280, height: 900 } });
    watchErrors(techCtx, errors, "tech");
    watchErrors(expCtx, errors, "expert");
    const tech = await techCtx.newPage();
    const expert = await expCtx.newPage();
    await signInThroughPage(tech, link.url, team.technicians[0].email, FACTORY_PASSWORD);
    const direct = `http://127.0.0.1:${server.port}`; // the expert's own connection, not the shop's link
    await signInThroughPage(expert, direct, e.email, FACTORY_PASSWORD);
    await expert.goto(`${direct}/cases/${caseId}`);
    await tech.goto(`${link.url}/cases/${caseId}`);
    const live = (p: Page) => p.locator('section[aria-labelledby="live-title"]');
    await live(expert).locator('[data-connection="live"]').waitFor({ timeout: 30_000 });

    // choose the file; the preview reads its start; the settings are the tech's
    const adder = tech.getByRole("region", { name: "Add traces" });
    await adder.locator('input[type="file"]').setInputFiles(file);
    const card = adder
      .getByRole("list", { name: "Traces to upload" })
      .getByRole("listitem", { name: "coil 3 idle.csv" });
    await card.getByText("Ready to upload").waitFor({ timeout: 30_000 });
    await card.getByRole("combobox", { name: "Kind of capture" }).selectOption({ label: "Secondary ignition" });
    await card.getByRole("textbox", { name: /^Vertical \(V\/div\)/ }).fill("0.2");
    await card.getByRole("textbox", { name: /^Time \/ div/ }).fill("20");
    await card.getByRole("combobox", { name: "Time unit" }).selectOption("ms");

    link.forwarded = 0;
    await card.getByRole("button", { name: "Upload trace" }).click();
    const status = card.getByTestId("upload-progress");
    await status.getByText(/^Sending/).waitFor({ timeout: 30_000 });
    // the expert sees it arriving
    const arriving = live(expert).getByTestId("incoming-upload");
    await arriving.getByText(/coil 3 idle\.csv/).waitFor({ timeout: 15_000 });
    await arriving.scrollIntoViewIfNeeded();
    await card.scrollIntoViewIfNeeded();
    await shot(tech, SHOTS, "01-sending", { viewport: true });
    await shot(expert, SHOTS, "02-expert-sees-it-arriving", { viewport: true });

    // cut the link once about half of the compressed bytes are over (≈ ¼ of the file, compressed ~4:1)
    await expect.poll(() => link.forwarded, { timeout: 60_000, interval: 100 }).toBeGreaterThan(size / 8);
    const cutAt = link.forwarded;
    link.cut();
    await status.getByText(/link dropped|No connection/i).waitFor({ timeout: 20_000 });
    await shot(tech, SHOTS, "03-link-dropped", { viewport: true });
    await tech.waitForTimeout(3000);
    link.restore();

    const done = card.getByText(/^Uploaded/);
    await done.waitFor({ timeout: 90_000 });
    // the server parsed the whole file: the generator's sample count
    expect(await done.innerText()).toContain(`${samples.toLocaleString("en-US")} samples`);
    await shot(tech, SHOTS, "04-uploaded");

    // what went over the link: the compressed file (as stored) and little more; the part after the cut
    // continued from the server's last byte instead of starting again
    const row = (await server.ctx.db.read((tx) =>
      tx.select().from(schema.trace).where(eq(schema.trace.caseId, caseId)).get(),
    ))!;
    expect(row.samples).toBe(samples);
    const compressed = fs.statSync(path.join(server.dir, row.originalPath)).size;
    expect(cutAt).toBeGreaterThan(compressed * 0.3);
    expect(cutAt).toBeLessThan(compressed * 0.8);
    expect(link.forwarded).toBeLessThan(compressed * 1.1 + 256 * 1024);

    // the expert's screen shows the trace (the case refetched on case:updated)
    await live(expert)
      .getByText(/No traces on this case yet/)
      .waitFor({ state: "detached", timeout: 30_000 });
    await expert.getByRole("article", { name: /coil 3 idle\.csv/ }).waitFor({ timeout: 30_000 });
    await shot(expert, SHOTS, "05-expert-sees-the-trace");
    // the cut also drops the tech's live socket: Chromium logs its failed reconnections, nothing else
    expect(errors.filter((m) => !/^tech console: WebSocket connection to .* failed/.test(m))).toEqual([]);
    await techCtx.close();
    await expCtx.close();
  }, 240_000);

  test("captures chosen while offline wait, then go one after another when the link returns", async () => {
    link.setRate(undefined);
    const a = smallCapture("cyl 1.csv", 0.3, 51);
    const b = smallCapture("cyl 2.csv", 0.3, 52);
    const { techCtx, tech } = await claimedCase();
    await techCtx.setOffline(true);
    const adder = tech.getByRole("region", { name: "Add traces" });
    await adder.locator('input[type="file"]').setInputFiles([a.file, b.file]);
    const list = adder.getByRole("list", { name: "Traces to upload" });
    for (const name of ["cyl 1.csv", "cyl 2.csv"]) await fillSettings(list.getByRole("listitem", { name }));
    await adder.getByRole("button", { name: "Upload all 2 traces" }).click();
    const first = list.getByRole("listitem", { name: "cyl 1.csv" });
    const second = list.getByRole("listitem", { name: "cyl 2.csv" });
    await first
      .getByTestId("upload-progress")
      .getByText(/No connection/)
      .waitFor({ timeout: 20_000 });
    await second
      .getByText(/Waiting its turn/)
      .first()
      .waitFor();
    await shot(tech, SHOTS, "06-offline-waiting", { viewport: true });
    await techCtx.setOffline(false);
    await first.getByText(/^Uploaded/).waitFor({ timeout: 60_000 });
    await second.getByText(/^Uploaded/).waitFor({ timeout: 60_000 });
    expect(await first.getByText(/^Uploaded/).innerText()).toContain(`${a.samples.toLocaleString("en-US")} samples`);
    expect(await second.getByText(/^Uploaded/).innerText()).toContain(`${b.samples.toLocaleString("en-US")} samples`);
    await techCtx.close();
  }, 120_000);

  test("a reload in the middle of an upload continues it from the server's last byte, without choosing the file again", async () => {
    const c = smallCapture("cyl 4 reload.csv", 0.6, 53);
    link.setRate(250_000); // 2 Mbit/s: slow enough to reload half-way
    const { caseId, techCtx, tech } = await claimedCase();
    const adder = tech.getByRole("region", { name: "Add traces" });
    await adder.locator('input[type="file"]').setInputFiles(c.file);
    const card = adder
      .getByRole("list", { name: "Traces to upload" })
      .getByRole("listitem", { name: "cyl 4 reload.csv" });
    await fillSettings(card);
    link.forwarded = 0;
    await card.getByRole("button", { name: "Upload trace" }).click();
    await card
      .getByTestId("upload-progress")
      .getByText(/^Sending/)
      .waitFor({ timeout: 30_000 });
    await expect.poll(() => link.forwarded, { timeout: 60_000, interval: 100 }).toBeGreaterThan(600_000);
    await tech.reload();
    const again = tech
      .getByRole("region", { name: "Add traces" })
      .getByRole("list", { name: "Traces to upload" })
      .getByRole("listitem", { name: "cyl 4 reload.csv" });
    await again
      .getByText(/Continues where it stopped|Resuming|Sending/)
      .first()
      .waitFor({ timeout: 30_000 });
    await shot(tech, SHOTS, "07-after-reload", { viewport: true });
    await again.getByText(/^Uploaded/).waitFor({ timeout: 90_000 });
    expect(await again.getByText(/^Uploaded/).innerText()).toContain(`${c.samples.toLocaleString("en-US")} samples`);
    const rows = await server.ctx.db.read((tx) =>
      tx.select().from(schema.trace).where(eq(schema.trace.caseId, caseId)).all(),
    );
    expect(rows).toHaveLength(1);
    const compressed = fs.statSync(path.join(server.dir, rows[0].originalPath)).size;
    // the page itself is reloaded over the same link (small requests); the capture went over once
    expect(link.forwarded).toBeLessThan(compressed * 1.1 + 256 * 1024);
    link.setRate(RATE);
    await techCtx.close();
  }, 180_000);
});
