import { afterAll, beforeAll, describe, expect, test } from "vitest";
import request from "supertest";
import { eq } from "drizzle-orm";
import type { BrowserContext, Page, Request } from "playwright-core";
import { schema } from "../../server/db/client";
import { insertCasebookEntries } from "../../server/services/casebook";
import { createExpert, createShopTeam, signIn, syntheticPattern, type SignedInAgent } from "../factories";
import { generateSecondary, renderCsv } from "../../demo/generators";
import { createRng } from "../helpers/prng";
import type { CasebookTrace } from "../../shared/schemas/casebook";
import {
  launchBrowser,
  screenshotDir,
  shot,
  startE2EServer,
  watchErrors,
  type E2EServer,
  type LaunchedBrowser,
} from "./helpers/browser";

/**
 * The live case page as its people use it (issue 13), in headless Chromium at 390, 820 and 1440 px:
 * on the phone the plot's top is within the first screen and runs the screen's width, the chat and
 * the marks are one tap away; on a tablet and a desk the layout holds (plot and chat side by side on
 * the desk); no page scrolls sideways; no keyboard hints on a touch screen; each chart asks for its
 * window once, at its width, with nothing cancelled; the overlay opens on the firing events; a pin
 * lands on the trace; casebook hits and similar cases show waveform thumbnails. Screenshots of
 * each state at each width: test-results/e2e/live-layout/.
 *
 * The captures come from the project's signal generator (demo/generators/secondary.ts) with these
 * stated parameters: secondary ignition at the pickup, 200 kS/s, 1500 rpm (a firing every 80 ms:
 * 120/1500 s), firing lines 0.8 V, spark lines 0.15 V; burn 1.5 ms on coils 1 and 3, 0.75 ms on
 * coil 2 (the odd one: half the others'). The screen: 10 ms/div, as the issue's report.
 */

const WIDTHS = [
  { label: "phone", width: 390, height: 844, touch: true, mobile: true },
  { label: "tablet", width: 820, height: 1180, touch: true, mobile: false },
  { label: "desk", width: 1440, height: 900, touch: false, mobile: false },
] as const;

const BURN_MS = [1.5, 0.75, 1.5];
const BURN_LEVEL_V = 0.15;
const shots = screenshotDir("live-layout");
const errors: string[] = [];
let server: E2EServer;
let launched: LaunchedBrowser;
let tech: SignedInAgent;
let expert: SignedInAgent;
let caseId = "";
const traceIds: string[] = [];
const firstFireS: number[] = [];

function capture(coil: number) {
  return generateSecondary({
    seed: 40 + coil,
    sampleRateHz: 200_000,
    rpm: 1500,
    events: 2,
    durationS: 0.1,
    peakV: 0.8,
    burnLevelV: BURN_LEVEL_V,
    burnTimeMs: BURN_MS[coil - 1],
  });
}

async function upload(id: string, coil: number, agent: SignedInAgent) {
  const g = capture(coil);
  const settings = { ...g.settings, timePerDivS: 0.01, cylinder: coil };
  const up = await request(server.url)
    .post(`/api/cases/${id}/traces`)
    .set("Cookie", agent.cookie)
    .field("settings", JSON.stringify(settings))
    .attach("file", Buffer.from(renderCsv(g.trace)), `coil${coil}.csv`);
  expect(up.status, JSON.stringify(up.body)).toBe(201);
  return { body: up.body as CasebookTrace & { analysis: { events: { timeS: number }[] } }, truth: g.truth };
}

async function newCase(agent: SignedInAgent, complaint: string): Promise<string> {
  const created = await agent.post("/api/cases").send({
    vehicle: { year: 2018, make: "Veltra", model: "Orvane", engine: "1.8 I4", mileage: 120500, mileageUnit: "km" },
    complaint,
    codes: ["P0302"],
    system: "ignition",
    symptoms: ["misfire"],
  });
  expect(created.status).toBe(201);
  return created.body.id as string;
}

/** A published casebook entry whose first trace is a real stored trace (for its thumbnail). */
async function publishedEntry(agent: SignedInAgent, expertId: string): Promise<string> {
  const id = await newCase(agent, "Misfire on cylinder 2 when warm");
  const { body } = await upload(id, 2, agent);
  const t: CasebookTrace = {
    id: body.id,
    name: "Coil 2",
    kind: body.kind,
    samples: body.samples,
    sampleRateHz: body.sampleRateHz,
    t0: body.t0,
    durationS: body.durationS,
    channels: body.channels,
    settings: body.settings,
    analysis: body.analysis,
    windowUrl: `/api/traces/${body.id}/window`,
  };
  await server.ctx.db.write((tx) =>
    tx.update(schema.caseTable).set({ status: "resolved", expertId }).where(eq(schema.caseTable.id, id)).run(),
  );
  const [entryId] = await insertCasebookEntries(server.ctx.db, [
    {
      caseId: id,
      expertId,
      vehicle: { year: 2017, make: "Veltra", model: "Orvane", engine: "1.8 I4" },
      complaint: "Misfire on cylinder 2 under load",
      codes: ["P0302"],
      system: "ignition",
      diagnosis: "Coil 2's spark line is half as long as the others'.",
      rootCause: "Coil 2 breaking down through its boot",
      fix: "Replace coil 2 and its boot.",
      traces: [t],
      pattern: syntheticPattern(createRng(3), { oddCoil: 2, burnMs: 1.5, oddBurnMs: 0.75, rpm: 1500, cylinders: 3 }),
    },
  ]);
  return entryId;
}

beforeAll(async () => {
  server = await startE2EServer();
  const team = await createShopTeam(server, { technician: { name: "Robin Marsh" } });
  const e = await createExpert(server, { name: "Sam Okafor" });
  tech = await signIn(server, team.technicians[0]);
  expert = await signIn(server, e);
  await publishedEntry(tech, e.id);
  caseId = await newCase(tech, "Misfire on cylinder 2 under load when warm");
  for (const coil of [1, 2, 3]) {
    const { body, truth } = await upload(caseId, coil, tech);
    traceIds.push(body.id);
    firstFireS.push(truth.events[0].timeS);
  }
  // the expert has claimed the case (set directly: the paid queue is tested on its own)
  await server.ctx.db.write((tx) =>
    tx
      .update(schema.caseTable)
      .set({ status: "claimed", expertId: e.id, claimedAt: new Date() })
      .where(eq(schema.caseTable.id, caseId))
      .run(),
  );
  launched = await launchBrowser();
}, 180_000);

afterAll(async () => {
  await launched?.close();
  await server?.close();
});

async function pageAs(
  agent: SignedInAgent,
  who: string,
  w: (typeof WIDTHS)[number],
): Promise<{ ctx: BrowserContext; page: Page }> {
  const ctx = await launched.browser.newContext({
    viewport: { width: w.width, height: w.height },
    hasTouch: w.touch,
    isMobile: w.mobile,
  });
  watchErrors(ctx, errors, `${who}@${w.width}`);
  const host = new URL(server.url).hostname;
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
  return { ctx, page: await ctx.newPage() };
}

/** Window requests of a page, and the ones that failed (a cancelled request fails with net::ERR_ABORTED). */
function watchWindows(page: Page) {
  const asked: { traceId: string; t0: number; t1: number; width: number }[] = [];
  const failed: string[] = [];
  const parse = (r: Request) => {
    const u = new URL(r.url());
    const m = /^\/api\/traces\/([^/]+)\/window$/.exec(u.pathname);
    return m
      ? {
          traceId: decodeURIComponent(m[1]),
          t0: Number(u.searchParams.get("t0")),
          t1: Number(u.searchParams.get("t1")),
          width: Number(u.searchParams.get("width")),
        }
      : null;
  };
  page.on("request", (r) => {
    const w = parse(r);
    if (w) asked.push(w);
  });
  page.on("requestfailed", (r) => {
    if (parse(r)) failed.push(`${r.url()} ${r.failure()?.errorText}`);
  });
  return { asked, failed };
}

const live = (p: Page) => p.locator('section[aria-labelledby="live-title"]');

async function noSidewaysScroll(page: Page): Promise<void> {
  const { scroll, client } = await page.evaluate(() => {
    // runs in the page (this file is type-checked without the DOM library)
    const el = (
      globalThis as unknown as { document: { documentElement: { scrollWidth: number; clientWidth: number } } }
    ).document.documentElement;
    return { scroll: el.scrollWidth, client: el.clientWidth };
  });
  expect(scroll, "the page's width against the viewport's").toBeLessThanOrEqual(client);
}

async function openLiveCase(page: Page): Promise<void> {
  await page.goto(`${server.url}/cases/${caseId}`);
  await live(page).locator('[data-connection="live"]').waitFor({ timeout: 30_000 });
  await live(page).getByRole("img").first().waitFor();
  await page.waitForLoadState("networkidle");
}

describe.sequential("the live case page at 390, 820 and 1440 px", () => {
  for (const w of WIDTHS) {
    test(`${w.label} (${w.width} px): the plot first, the chat one tap away, each chart asks once`, async () => {
      const { ctx, page } = await pageAs(tech, "tech", w);
      try {
        const net = watchWindows(page);
        await openLiveCase(page);
        await shot(page, shots, `${w.width}-tech-live-first-screen`, { viewport: true });

        // the live plot's top is within the first screen; on the phone it runs the screen's width
        const plot = live(page).getByRole("img").first();
        const box = (await plot.boundingBox())!;
        expect(box.y, "plot top").toBeGreaterThanOrEqual(0);
        expect(box.y + 120, "the plot's top 120 px inside the first screen").toBeLessThanOrEqual(w.height);
        if (w.label === "phone") expect(box.width).toBeGreaterThanOrEqual(w.width - 2);
        // the flagged trace (coil 2, the comparison's odd one out) is open, not cylinder 1
        expect(await live(page).getByRole("tab", { selected: true }).innerText()).toMatch(/^Cylinder 2/);
        await noSidewaysScroll(page);

        // each chart asked for its window once, at its own width, and nothing was cancelled: the
        // live viewer shows coil 2 and each trace's card one trace
        expect(net.failed).toEqual([]);
        const charts: Record<string, number> = { [traceIds[0]]: 1, [traceIds[1]]: 2, [traceIds[2]]: 1 };
        for (const id of traceIds)
          expect(net.asked.filter((r) => r.traceId === id).length, `requests for ${id}`).toBeLessThanOrEqual(
            charts[id],
          );
        expect(net.asked.length).toBeGreaterThanOrEqual(3);
        // one bucket per pixel of the plot area over the view and a quarter either side: at most
        // 1.5 × the page's width (rounded up to 32 px), far below 768 on the phone
        for (const r of net.asked) expect(r.width).toBeLessThanOrEqual(Math.ceil((w.width * 1.5) / 32) * 32);

        if (w.touch) {
          // no keyboard hints on a touch screen, in any of the page's viewers
          expect(await page.getByText(/Keys:/).count()).toBe(0);
          expect(await page.getByRole("button", { name: /\(\+\)|\(c\)|\(p\)/ }).count()).toBe(0);
          expect(await page.getByText("Enter sends").count()).toBe(0);
          // the chat is one tap away: the dock's "Chat"
          await page.getByRole("navigation", { name: "Chat and marks" }).getByRole("button", { name: /^Chat/ }).tap();
          const input = page.getByRole("textbox", { name: "Message" });
          await input.waitFor();
          const ib = (await input.boundingBox())!;
          expect(ib.y + ib.height, "the message box inside the screen").toBeLessThanOrEqual(w.height);
          await input.fill(`Capturing coil 2 again at ${w.width} px`);
          await page.getByRole("button", { name: "Send message" }).tap();
          await page
            .getByRole("list", { name: "Messages" })
            .getByText(`Capturing coil 2 again at ${w.width} px`)
            .waitFor();
          await shot(page, shots, `${w.width}-tech-chat-sheet`, { viewport: true });
          await noSidewaysScroll(page);
          if (w.label === "phone") {
            await page
              .getByRole("dialog", { name: "Chat and marks" })
              .getByRole("tab", { name: /^Marks/ })
              .tap();
            await page.getByRole("dialog", { name: "Chat and marks" }).getByText("No marks yet.").waitFor();
            await shot(page, shots, `${w.width}-tech-marks-sheet`, { viewport: true });
          }
          await page.getByRole("button", { name: "Lower the panel" }).tap();
        } else {
          // on a desk the chat sits beside the plot
          const chat = live(page).getByRole("region", { name: "Chat" });
          const cb = (await chat.boundingBox())!;
          expect(cb.x, "chat right of the plot").toBeGreaterThanOrEqual(box.x + box.width);
          expect(cb.y).toBeLessThan(w.height);
          expect(await live(page).getByText(/Keys:/).count()).toBe(1);
        }
        // the whole page last (a full-page capture resizes the emulated screen)
        await shot(page, shots, `${w.width}-tech-live-page`);
      } finally {
        await ctx.close();
      }
    });
  }

  test("the case's pictures at each width: the comparison beside its bars, the overlay on the firing events", async () => {
    for (const w of WIDTHS) {
      const { ctx, page } = await pageAs(tech, "tech", w);
      try {
        await openLiveCase(page);
        const cmp = page.getByRole("region", { name: "Cylinder to cylinder" });
        await cmp.scrollIntoViewIfNeeded();
        const bars = cmp.getByRole("img", { name: /^Burn time, ms: / });
        // the odd coil's bar is drawn in the alarm colour and said in the chart's words
        expect(await bars.getAttribute("aria-label")).toMatch(/Cylinder 2 0\.7\d+ \(stands out\)/);
        expect(await cmp.locator('g[data-odd="true"] rect').first().getAttribute("fill")).toBe("#a2322c");
        await cmp.screenshot({ path: `${shots}/${w.width}-comparison.png` });

        await page.getByRole("button", { name: /^Overlay all 3 traces/ }).click();
        const overlay = page.getByRole("region", { name: /^Trace overlay of 3 traces/ });
        const oplot = overlay.getByRole("img").first();
        await oplot.waitFor();
        const t0 = Number(await oplot.getAttribute("data-window-t0"));
        const t1 = Number(await oplot.getAttribute("data-window-t1"));
        // opened on the firing events: the longest burn (1.5 ms, generator) and as much again fit,
        // and the odd coil's 0.75 ms burn spans at least a tenth of the plot (at the capture's
        // 10 ms/div it would be 0.75 % of it)
        expect(t0).toBeLessThan(0);
        expect(t1).toBeGreaterThanOrEqual(2 * 1.5e-3);
        expect(0.75e-3 / (t1 - t0)).toBeGreaterThan(0.1);
        await overlay.screenshot({ path: `${shots}/${w.width}-overlay.png` });
        await noSidewaysScroll(page);
      } finally {
        await ctx.close();
      }
    }
  });

  test("thumbnails in the casebook's hits and in similar cases, at each width", async () => {
    for (const w of WIDTHS) {
      const { ctx, page } = await pageAs(tech, "tech", w);
      try {
        await page.goto(`${server.url}/cases/${caseId}`);
        const similar = page.getByRole("region", { name: "These may already answer your case" });
        await similar.scrollIntoViewIfNeeded();
        const thumb = similar.locator("img[data-thumbnail]").first();
        await thumb.waitFor();
        await expect
          .poll(() =>
            thumb.evaluate((img) =>
              (img as { complete: boolean }).complete ? (img as { naturalWidth: number }).naturalWidth : 0,
            ),
          )
          .toBe(160);
        await similar.screenshot({ path: `${shots}/${w.width}-similar-cases.png` });
        await page.goto(`${server.url}/casebook`);
        const hit = page.getByRole("article").filter({ hasText: "Veltra Orvane" }).first();
        await hit.waitFor();
        const ht = hit.locator("img[data-thumbnail]");
        await expect
          .poll(() =>
            ht.evaluate((img) =>
              (img as { complete: boolean }).complete ? (img as { naturalWidth: number }).naturalWidth : 0,
            ),
          )
          .toBe(160);
        await shot(page, shots, `${w.width}-casebook-hits`, { viewport: true });
        await noSidewaysScroll(page);
      } finally {
        await ctx.close();
      }
    }
  });

  test("the expert at each width: the pin tool disarms after one pin, the pin stands on the spark line", async () => {
    for (const w of WIDTHS) {
      const { ctx, page } = await pageAs(expert, "expert", w);
      try {
        await openLiveCase(page);
        const area = live(page);
        await shot(page, shots, `${w.width}-expert-live-first-screen`, { viewport: true });
        const pin = area.getByRole("button", { name: w.touch ? "Pin" : "Pin (p)", exact: true });
        await pin.click();
        expect(await pin.getAttribute("aria-pressed")).toBe("true");
        // aim a third into coil 2's first spark line (generator: firing time and burn time), high
        // above the spark line: the pin must land on the trace, not where the click was
        const over = area.locator(".u-over").first();
        const ob = (await over.boundingBox())!;
        const plot = area.getByRole("img").first();
        const v0 = Number(await plot.getAttribute("data-window-t0"));
        const v1 = Number(await plot.getAttribute("data-window-t1"));
        const aim = firstFireS[1] + 0.75e-3 / 3;
        const x = ob.x + ((aim - v0) / (v1 - v0)) * ob.width;
        if (w.touch) await page.touchscreen.tap(x, ob.y + ob.height * 0.15);
        else await page.mouse.click(x, ob.y + ob.height * 0.15);
        const label = area.getByLabel(/^Label for the new pin/);
        await label.fill(`spark line at ${w.width}`);
        await label.press("Enter");
        // the tool put itself down: the next drag zooms
        expect(await pin.getAttribute("aria-pressed")).toBe("false");
        await expect
          .poll(async () =>
            ((await expert.get(`/api/cases/${caseId}/annotations`)).body.annotations as { label: string }[]).some(
              (a) => a.label === `spark line at ${w.width}`,
            ),
          )
          .toBe(true);
        const stored = (
          (await expert.get(`/api/cases/${caseId}/annotations`)).body.annotations as {
            label: string;
            level: number;
            t0: number;
          }[]
        ).find((a) => a.label === `spark line at ${w.width}`)!;
        // its level is the spark line's (generator: 0.15 V at the pickup, ±10 % for the slope, the
        // noise and one pixel of time), far from the click's height near the top of the screen
        expect(stored.level).toBeGreaterThan(BURN_LEVEL_V * 0.8);
        expect(stored.level).toBeLessThan(BURN_LEVEL_V * 1.25);
        await shot(page, shots, `${w.width}-expert-pinned`, { viewport: true });
        await noSidewaysScroll(page);
      } finally {
        await ctx.close();
      }
    }
  });

  test("no page error", () => {
    expect(errors).toEqual([]);
  });
});
