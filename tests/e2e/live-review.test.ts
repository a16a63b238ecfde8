import { afterAll, beforeAll, expect, test } from "vitest";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import request from "supertest";
import { eq } from "drizzle-orm";
import { build } from "vite";
import { chromium, type Browser, type BrowserContext, type Page } from "playwright-core";
import { pino } from "pino";
import { startServer, type RunningServer } from "../../server/index";
import type { RealtimeServer } from "../../server/realtime/index";
import { schema } from "../../server/db/client";
import { createExpert, createShopTeam, signIn, type SignedInAgent } from "../factories";
import { authorColor } from "../../shared/realtime";

// The browser criterion, in headless Chromium with two contexts: the expert's pin appears
// on the technician's plot (its colour is found in the plot's pixels, and the mark is listed beside
// it), and the technician's reply appears in the expert's chat; when the tech's connection drops the
// page shows "Reconnecting…" and the mark made meanwhile arrives after it. Screenshots: test-results/e2e/.

const executablePath = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";
const shots = path.resolve("test-results/e2e");
let server: RunningServer;
let browser: Browser;
let dir: string;
const pageErrors: string[] = [];

/**
 * A 20 ms secondary-ignition-like capture at 100 kS/s (invented demo data, not a reference): a
 * firing spike of 8 V at 5 ms, a 1.5 V spark line for 1.5 ms, then damped ringing.
 */
function captureCsv(): string {
  const lines = ["Time (s),Channel A (V)"];
  for (let i = 0; i < 2000; i++) {
    const t = i / 100_000;
    let v = 0;
    if (t >= 0.005 && t < 0.00502) v = 8;
    else if (t >= 0.00502 && t < 0.0065) v = 1.5;
    else if (t >= 0.0065) v = 2 * Math.exp(-(t - 0.0065) / 0.0005) * Math.cos(2 * Math.PI * 4000 * (t - 0.0065));
    lines.push(`${t.toFixed(6)},${v.toFixed(4)}`);
  }
  return lines.join("\n") + "\n";
}

async function contextFor(agent: SignedInAgent, base: string): Promise<BrowserContext> {
  const ctx = await browser.newContext({ viewport: { width: 1400, height: 1000 } });
  const host = new URL(base).hostname;
  await ctx.addCookies(
    agent.cookie.split("; ").map((c) => {
      const i = c.indexOf("=");
      return {
        name: c.slice(0, i),
        value: c.slice(i + 1),
        domain: host,
        path: "/",
        httpOnly: true,
        sameSite: "Lax" as const,
      };
    }),
  );
  return ctx;
}

/** Pixels of the plot's canvases within a small distance of a colour. */
async function pixelsOf(page: Page, color: string): Promise<number> {
  return page.evaluate((hex) => {
    const r = parseInt(hex.slice(1, 3), 16);
    const g = parseInt(hex.slice(3, 5), 16);
    const b = parseInt(hex.slice(5, 7), 16);
    let n = 0;
    // runs in the page (this file is type-checked without the DOM library)
    // eslint-disable-next-line @typescript-eslint/no-explicit-any -- runs in the page; this file is type-checked without the DOM library
    const doc = (globalThis as any).document;
    const section = doc.querySelector('section[aria-labelledby="live-title"]');
    // eslint-disable-next-line @typescript-eslint/no-explicit-any -- a canvas element of the page (no DOM types here)
    for (const c of Array.from((section?.querySelectorAll("canvas") ?? []) as ArrayLike<any>)) {
      const ctx = c.getContext("2d");
      if (!ctx || !c.width || !c.height) continue;
      const d = ctx.getImageData(0, 0, c.width, c.height).data;
      for (let i = 0; i < d.length; i += 4)
        if (d[i + 3] > 200 && Math.abs(d[i] - r) <= 6 && Math.abs(d[i + 1] - g) <= 6 && Math.abs(d[i + 2] - b) <= 6)
          n++;
    }
    return n;
  }, color);
}

beforeAll(async () => {
  await build({ configFile: path.resolve("vite.config.ts"), logLevel: "error" });
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-e2e-live-"));
  fs.mkdirSync(shots, { recursive: true });
  server = await startServer(
    {
      NODE_ENV: "test",
      PORT: "0",
      HOST: "127.0.0.1",
      DATABASE_URL: path.join(dir, "db.sqlite"),
      DATA_DIR: dir,
      MAIL_CATCHER_PORT: "0",
      FAKE_STRIPE_PORT: "0",
      LOG_LEVEL: "silent",
      DEMO: "false",
    },
    pino({ level: "silent" }),
  );
  browser = await chromium.launch({
    executablePath,
    headless: true,
    // playwright-core gives each launch a fresh temporary --user-data-dir of its own (mkdtemp
    // "playwright_chromiumdev_profile-…"); passing one here is refused by launch().
    args: [
      "--no-sandbox",
      "--disable-gpu",
      "--disable-quic",
      "--no-first-run",
      "--disable-background-networking",
      "--disable-component-update",
      "--disable-sync",
    ],
  });
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
  for (const d of [dir]) if (d) fs.rmSync(d, { recursive: true, force: true });
});

test("the expert's pin appears on the tech's plot and the tech's reply in the expert's chat", async () => {
  const base = `http://127.0.0.1:${server.port}`;
  const team = await createShopTeam(server, { technician: { name: "Robin Marsh" } });
  const e = await createExpert(server, { name: "Sam Okafor" });
  const tech = await signIn(server, team.technicians[0]);
  const expert = await signIn(server, e);

  // the tech opens a case and uploads a capture; then the expert has claimed it (set directly: the
  // paid queue is tested on its own)
  const created = await tech.post("/api/cases").send({
    vehicle: {
      vin: "1M8GDM9AXKP042788",
      year: 2019,
      make: "Veltra",
      model: "Sorrel",
      engine: "2.0 I4",
      mileage: 84210,
      mileageUnit: "km",
    },
    complaint: "Misfire on cylinder 4 under load when warm",
    codes: ["P0304"],
    system: "ignition",
    symptoms: ["misfire"],
  });
  expect(created.status).toBe(201);
  const caseId = created.body.id as string;
  const up = await request(base)
    .post(`/api/cases/${caseId}/traces`)
    .set("Cookie", tech.cookie)
    .field(
      "settings",
      JSON.stringify({
        kind: "secondary-ignition",
        probe: "capacitive-secondary",
        voltsPerDiv: 2,
        timePerDivS: 0.002,
        cylinder: 4,
      }),
    )
    .attach("file", Buffer.from(captureCsv()), "cyl4-secondary.csv");
  expect(up.status).toBe(201);
  await server.ctx.db.write((tx) =>
    tx
      .update(schema.caseTable)
      .set({ status: "claimed", expertId: e.id, claimedAt: new Date() })
      .where(eq(schema.caseTable.id, caseId))
      .run(),
  );

  const techCtx = await contextFor(tech, base);
  const expCtx = await contextFor(expert, base);
  const techPage = await techCtx.newPage();
  const expPage = await expCtx.newPage();
  for (const p of [techPage, expPage]) {
    p.on("pageerror", (err) => pageErrors.push(String(err)));
    await p.goto(`${base}/cases/${caseId}`);
  }
  const live = (p: Page) => p.locator('section[aria-labelledby="live-title"]');
  for (const p of [techPage, expPage]) await live(p).locator('[data-connection="live"]').waitFor({ timeout: 30_000 });
  // each sees the other in the presence list
  await live(techPage).getByRole("list", { name: "Participants" }).getByText("Sam Okafor").waitFor();
  await live(expPage).getByRole("list", { name: "Participants" }).getByText("Robin Marsh").waitFor();
  // the plots have drawn their data
  await live(techPage).locator("canvas").first().waitFor();
  await techPage.waitForTimeout(500);

  const expertColor = authorColor({ id: e.id, role: "expert" });
  const before = await pixelsOf(techPage, expertColor);

  // the expert drops a pin with the viewer's pin tool and labels it
  const pinTool = live(expPage).getByRole("button", { name: "Pin (p)" });
  await pinTool.click();
  const plot = live(expPage).locator('[role="img"]').first();
  const box = (await plot.boundingBox())!;
  await expPage.mouse.click(box.x + box.width * 0.5, box.y + box.height * 0.4);
  await live(expPage)
    .getByLabel(/Label for the new pin/)
    .fill("Firing line too high");
  await live(expPage)
    .getByLabel(/Label for the new pin/)
    .press("Enter");
  await live(expPage).getByText("Firing line too high").first().waitFor();

  // it appears on the tech's plot and in the list beside it
  await live(techPage)
    .getByRole("button", { name: /Pin · Firing line too high/ })
    .waitFor({ timeout: 10_000 });
  await expect.poll(() => pixelsOf(techPage, expertColor), { timeout: 10_000 }).toBeGreaterThan(before + 20);
  await techPage.screenshot({ path: path.join(shots, "live-review-tech.png"), fullPage: true });

  // the tech answers in the chat; the expert sees it
  const input = live(techPage).getByLabel("Message", { exact: true });
  await input.fill("Plug gap on 4 is 1.4 mm, capturing again now");
  await input.press("Enter");
  await live(expPage)
    .getByRole("list", { name: "Messages" })
    .getByText("Plug gap on 4 is 1.4 mm, capturing again now")
    .waitFor({ timeout: 10_000 });
  await expPage.screenshot({ path: path.join(shots, "live-review-expert.png"), fullPage: true });

  // the tech's connection drops (the network goes away, then the server loses the socket): the page
  // says it is reconnecting; what the expert marks meanwhile arrives after the reconnect
  await techCtx.setOffline(true);
  const io = (server.ctx.realtime as unknown as RealtimeServer).io;
  for (const sock of io.of("/").sockets.values()) if (sock.data.userId === team.technicians[0].id) sock.conn.close();
  await live(techPage).locator('[data-connection="reconnecting"]').waitFor({ timeout: 10_000 });
  expect(await live(techPage).locator('[data-connection="reconnecting"]').innerText()).toMatch(/^Reconnecting…/);
  await live(techPage).screenshot({ path: path.join(shots, "live-review-tech-reconnecting.png") });
  if ((await pinTool.getAttribute("aria-pressed")) !== "true") await pinTool.click(); // the tool stays chosen after a mark
  await expPage.mouse.click(box.x + box.width * 0.3, box.y + box.height * 0.5);
  await live(expPage)
    .getByLabel(/Label for the new pin/)
    .fill("Spark line short");
  await live(expPage)
    .getByLabel(/Label for the new pin/)
    .press("Enter");
  await live(expPage)
    .getByRole("button", { name: /Pin · Spark line short/ })
    .waitFor();
  expect(
    await live(techPage)
      .getByRole("button", { name: /Pin · Spark line short/ })
      .count(),
  ).toBe(0);
  await techCtx.setOffline(false);
  await live(techPage).locator('[data-connection="live"]').waitFor({ timeout: 20_000 });
  await live(techPage)
    .getByRole("button", { name: /Pin · Spark line short/ })
    .waitFor({ timeout: 10_000 });
  expect(
    await live(techPage)
      .getByRole("button", { name: /Pin · / })
      .count(),
  ).toBe(2);

  // stored once each, with the case's seq
  const marks = await tech.get(`/api/cases/${caseId}/annotations`);
  expect(marks.body.annotations).toHaveLength(2);
  expect(marks.body.annotations[0]).toMatchObject({
    kind: "pin",
    label: "Firing line too high",
    authorId: e.id,
    color: expertColor,
    seq: 1,
  });
  expect(marks.body.annotations[1]).toMatchObject({ kind: "pin", label: "Spark line short", seq: 3 });
  const msgs = await expert.get(`/api/cases/${caseId}/messages`);
  expect(msgs.body.messages.map((m: { text: string; seq: number }) => [m.text, m.seq])).toEqual([
    ["Plug gap on 4 is 1.4 mm, capturing again now", 2],
  ]);
  expect(pageErrors).toEqual([]);
  await techCtx.close();
  await expCtx.close();
});
