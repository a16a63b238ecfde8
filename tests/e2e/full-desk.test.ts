import { sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, test } from "vitest";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import type { BrowserContext, Page } from "playwright-core";
import { createExpert, createShopTeam } from "../factories";
import { generateSecondary, type SecondaryTruth } from "../../demo/generators/secondary";
import { renderCsv } from "../../demo/generators/csv";
import { vinCheckDigit } from "../../shared/domain/vin";
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

/**
 * The whole desk in a real browser, as its two users walk it: a technician opens a case with a
 * VIN, codes and three coil captures, sees the measurements and the odd coil flagged, pays on the
 * fake checkout; an expert in a second browser context gets the offer, claims the case and pins
 * the short burn on the odd coil; the tech sees the pin arrive live and replies; the expert
 * answers; the tech confirms the fix; the entry is found in the casebook by its code.
 * A screenshot of every step is kept under test-results/e2e/full-desk/.
 *
 * The captures come from the project's secondary-ignition generator with known truth: coil 2's
 * spark is generated with about half the burn time of the others (0.75 ms against 1.5 ms).
 */

const SHOTS = screenshotDir("full-desk");
const PASSWORD = "Millrace-bay-4-scope";
/** A structurally valid VIN for an invented vehicle (check digit computed as in 49 CFR 565.15). */
const VIN = (() => {
  const draft = "5V9AR1K80HAB20417";
  return draft.slice(0, 8) + vinCheckDigit(draft) + draft.slice(9);
})();
const CODE = "P0302";

let server: E2EServer;
let launched: LaunchedBrowser;
let techCtx: BrowserContext;
let expertCtx: BrowserContext;
let tech: Page;
let exp: Page;
let caseId = "";
let fileDir: string;
const files: { path: string; truth: SecondaryTruth }[] = [];
const errors: string[] = [];

beforeAll(async () => {
  server = await startE2EServer();
  await createShopTeam(server, {
    name: "Millrace Garage",
    owner: { email: "owner@millrace.test", name: "Petra Lowe", password: PASSWORD },
    technician: { email: "jo@millrace.test", name: "Jo Brennan", password: PASSWORD },
  });
  await createExpert(server, {
    email: "rosa@experts.test",
    name: "Rosa Quint",
    password: PASSWORD,
    systems: ["ignition"],
    makes: ["Veltra"],
  });

  fileDir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-e2e-traces-"));
  for (const cyl of [1, 2, 3]) {
    const g = generateSecondary({
      seed: 40 + cyl,
      sampleRateHz: 1_000_000,
      rpm: 2000,
      events: 2,
      kvPerVolt: 10,
      burnTimeMs: cyl === 2 ? 0.75 : 1.5,
    });
    const file = path.join(fileDir, `arden_coil${cyl}.csv`);
    fs.writeFileSync(file, renderCsv(g.trace, { timeUnit: "ms" }));
    files.push({ path: file, truth: g.truth });
  }

  launched = await launchBrowser();
  techCtx = await launched.browser.newContext({ viewport: { width: 1280, height: 900 } });
  expertCtx = await launched.browser.newContext({ viewport: { width: 1280, height: 900 } });
  watchErrors(techCtx, errors, "tech");
  watchErrors(expertCtx, errors, "expert");
  tech = await techCtx.newPage();
  exp = await expertCtx.newPage();
});

afterAll(async () => {
  await launched?.close();
  await server?.close();
  if (fileDir) fs.rmSync(fileDir, { recursive: true, force: true });
});

describe.sequential("the whole desk, two people in two browsers", () => {
  test("1. the technician opens a case with a VIN, a code and three coil captures", async () => {
    await signInThroughPage(tech, server.url, "jo@millrace.test", PASSWORD);
    await tech.goto(server.url + "/cases/new");
    await tech.getByRole("heading", { name: "Open a case" }).waitFor();
    await tech.getByRole("textbox", { name: /^VIN/ }).fill(VIN);
    await tech.getByRole("textbox", { name: "Make", exact: true }).fill("Veltra");
    await tech.getByRole("textbox", { name: "Model", exact: true }).fill("Orvane");
    await tech.getByRole("textbox", { name: /^Engine/ }).fill("1.8 I4");
    await tech
      .getByRole("textbox", { name: "What the customer reports" })
      .fill("Misfire on cylinder 2 under load, worse when the engine is hot.");
    await tech.getByRole("checkbox", { name: "Misfire" }).check();
    await tech.getByPlaceholder("e.g. P0304").fill(CODE);
    await tech.getByPlaceholder("e.g. P0304").press("Enter");
    await tech.getByRole("radio", { name: "Ignition" }).check();
    await tech
      .getByRole("textbox", { name: /^Tests already done/ })
      .fill("Swapped coils 2 and 3: the misfire stayed on cylinder 2.");
    // the VIN fills in the model year (position 10: H, with a letter in position 7: 2017; 49 CFR 565.15(b))
    await expect.poll(() => tech.getByRole("textbox", { name: /^Model year/ }).inputValue()).toBe("2017");

    const traces = tech.getByRole("region", { name: "Traces" });
    await traces.locator('input[type="file"]').setInputFiles(files.map((f) => f.path));
    const cards = traces.getByRole("list", { name: "Traces to upload" }).getByRole("listitem");
    await expect.poll(() => cards.count()).toBe(3);
    await shot(tech, SHOTS, "01-new-case-with-traces");
    await tech.getByRole("button", { name: /Upload all 3 traces/ }).click();
    await expect.poll(() => traces.getByText(/^Uploaded/).count(), { timeout: 60_000 }).toBe(3);
    await tech.getByRole("button", { name: "Save draft" }).click();
    await tech.waitForURL(/\/cases\/[^/]+\/edit$/);
    caseId = /\/cases\/([^/]+)\/edit$/.exec(new URL(tech.url()).pathname)![1];
    await tech.getByText(/Draft saved at/).waitFor();
    await shot(tech, SHOTS, "02-draft-saved");
  });

  test("2. the case page shows the measurements and flags the odd coil", async () => {
    expect(caseId, "step 1 made the case").not.toBe("");
    await tech.goto(`${server.url}/cases/${caseId}`);
    await tech.getByRole("heading", { name: /2017 Veltra Orvane/ }).waitFor();
    await tech.getByRole("heading", { name: /Traces/ }).waitFor();
    const cmp = tech.getByRole("region", { name: "Cylinder to cylinder" });
    await cmp.waitFor();
    // one odd one out: coil 2, by its burn time (modified z-score, Iglewicz and Hoaglin 1993, |M| > 3.5)
    const odd = cmp.getByRole("list", { name: "Odd ones out" }).getByRole("listitem");
    await expect.poll(() => odd.allInnerTexts()).toHaveLength(1);
    // said in plain words first ("Coil 2: burn time 44 % shorter"), the statistic one click away
    expect(await odd.first().innerText()).toMatch(/^[●\s]*Coil 2\b.*burn time/i);
    await expect.poll(() => cmp.getByRole("rowheader", { name: /odd one out/ }).innerText()).toMatch(/^Coil 2/);
    // each coil's burn time and engine speed against the generator's truth
    for (const [i, f] of files.entries()) {
      const m = tech.getByRole("region", { name: `Measurements of Coil ${i + 1}` });
      const burnCell = m
        .getByRole("row", { name: /^Burn time/ })
        .getByRole("cell")
        .first();
      const burnMs = parseFloat(await burnCell.innerText());
      const truth = f.truth.events.reduce((a, e) => a + e.burnTimeMs, 0) / f.truth.events.length;
      expect(Math.abs(burnMs - truth) / truth, `coil ${i + 1} burn ${burnMs} ms vs ${truth} ms`).toBeLessThan(0.05);
      const rpm = parseFloat((await m.getByText(/ rpm$/).first().innerText()).replace(/,/g, ""));
      expect(Math.abs(rpm - f.truth.rpm!) / f.truth.rpm!, `coil ${i + 1} rpm`).toBeLessThan(0.01);
    }
    await cmp.scrollIntoViewIfNeeded();
    await shot(tech, SHOTS, "03-case-page-measurements-odd-coil");
  });

  test("3. the technician pays on the fake checkout and the case is queued", async () => {
    expect(caseId, "step 1 made the case").not.toBe("");
    await tech.getByRole("button", { name: /^Pay \$[\d.]+ and submit$/ }).click();
    await tech.waitForURL(/\/checkout\/cs_/);
    await tech.getByRole("heading", { name: "Test checkout" }).waitFor();
    // Stripe's published test card that succeeds (docs.stripe.com/testing#cards)
    await tech.getByLabel("Card number").fill("4242 4242 4242 4242");
    await tech.getByLabel("Expiry (MM / YY)").fill("12 / 34");
    await tech.getByLabel("CVC").fill("123");
    await shot(tech, SHOTS, "04-fake-checkout");
    await tech.getByRole("button", { name: "Pay" }).click();
    await tech.waitForURL((u) => u.pathname === `/cases/${caseId}`);
    await tech.getByText("Payment confirmed: your case is in the queue").waitFor({ timeout: 60_000 });
    await shot(tech, SHOTS, "05-paid-and-queued");
  });

  test("4. the expert gets the offer and claims the case", async () => {
    expect(caseId, "step 1 made the case").not.toBe("");
    await signInThroughPage(exp, server.url, "rosa@experts.test", PASSWORD);
    await exp.goto(server.url + "/queue");
    const offered = exp.getByRole("region", { name: /Offered to you/ });
    const offer = offered
      .getByRole("article")
      .filter({ has: exp.getByRole("heading", { name: /2017 Veltra Orvane/ }) });
    await offer.waitFor();
    expect(await offer.innerText()).toContain(CODE);
    expect(await offer.innerText()).toContain("3 traces");
    await shot(exp, SHOTS, "06-expert-gets-the-offer");
    await offer.getByRole("button", { name: "Claim" }).click();
    await exp.waitForURL((u) => u.pathname === `/cases/${caseId}`);
    await exp.getByRole("region", { name: "Your work on this case" }).waitFor();
    await exp.getByRole("region", { name: "Live review" }).waitFor();
    await shot(exp, SHOTS, "07-expert-claimed");
    // the technician's open page follows without a reload (a queued case's page checks every 10 s)
    await tech.getByText("With an expert").first().waitFor({ timeout: 20_000 });
    await tech
      .getByRole("region", { name: "Live review" })
      .getByRole("listitem")
      .filter({ hasText: "Rosa Quint" })
      .waitFor({ timeout: 20_000 });
  });

  test("5. the expert pins the short burn on the odd coil; the technician sees it live and replies", async () => {
    expect(caseId, "step 1 made the case").not.toBe("");
    const live = exp.getByRole("region", { name: "Live review" });
    await live.getByRole("tab", { name: /^Coil 2/ }).click();
    const plot = live.getByRole("img", { name: /^Coil 2 · .*: 0 s to 100 ms/ });
    await plot.waitFor();
    await live.getByRole("button", { name: "Pin (p)" }).click();
    // the capture view spans 0–100 ms across the plot area; aim a third of the way into coil 2's
    // first spark line (the generator's truth: its firing time and burn time)
    const odd = files[1].truth.events[0];
    const aimS = odd.timeS + odd.burnTimeMs / 1000 / 3;
    const over = live.locator(".u-over").first();
    const box = (await over.boundingBox())!;
    await exp.mouse.click(box.x + (aimS / 0.1) * box.width, box.y + box.height * 0.45);
    const label = exp.getByLabel(/^Label for the new pin/);
    await label.fill("Short burn here: 0.75 ms against 1.5 ms on coils 1 and 3");
    await exp.getByRole("button", { name: "Add pin" }).click();
    const expMark = live.getByRole("button", { name: /^Pin · Short burn here/ });
    await expMark.waitFor();
    await expect.poll(() => expMark.innerText()).not.toContain("sending…");
    await live.scrollIntoViewIfNeeded();
    await shot(exp, SHOTS, "08-expert-pins-the-short-burn", { viewport: true });

    // the mark as stored lies inside the short spark line of coil 2 (generator's truth)
    const rows = await server.ctx.db.read((tx) =>
      tx.all<{ traceId: string; kind: string; t0: number }>(
        sql`SELECT trace_id AS traceId, kind, t0 FROM annotation WHERE case_id = ${caseId}`,
      ),
    );
    expect(rows).toHaveLength(1);
    expect(rows[0].kind).toBe("pin");
    expect(rows[0].t0).toBeGreaterThan(odd.timeS);
    expect(rows[0].t0).toBeLessThan(odd.timeS + odd.burnTimeMs / 1000);

    // on the technician's page, without a reload
    const techLive = tech.getByRole("region", { name: "Live review" });
    await techLive.getByRole("button", { name: /^Pin · Short burn here/ }).waitFor({ timeout: 20_000 });
    await techLive.scrollIntoViewIfNeeded();
    await shot(tech, SHOTS, "09-tech-sees-the-pin-live", { viewport: true });
    const chat = techLive.getByRole("region", { name: "Chat" });
    await chat
      .getByRole("textbox", { name: "Message" })
      .fill("Got it. The boot on coil 2 has a carbon track, I'll swap the coil and recheck.");
    await chat.getByRole("textbox", { name: "Message" }).press("Enter");
    await exp
      .getByRole("region", { name: "Chat" })
      .getByText(/carbon track/)
      .waitFor({ timeout: 20_000 });
    await shot(exp, SHOTS, "10-expert-sees-the-reply", { viewport: true });
  });

  test("6. the expert answers and the technician confirms the fix", async () => {
    expect(caseId, "step 1 made the case").not.toBe("");
    const work = exp.getByRole("region", { name: "Your work on this case" });
    await work
      .getByRole("textbox", { name: "Diagnosis" })
      .fill(
        "Coil 2's spark line is half as long as the others' and its firing line is uneven: the coil is leaking energy.",
      );
    await work
      .getByRole("textbox", { name: "Root cause" })
      .fill("Coil 2 breaking down, tracking through the boot to the plug well.");
    await work
      .getByRole("textbox", { name: "Recommended fix" })
      .fill("Replace coil 2 and its boot; clean the plug well.");
    await work
      .getByRole("textbox", { name: "Tests to confirm the fix" })
      .fill("A new capture at 2000 rpm: coil 2's burn time within 10 % of the others.");
    await shot(exp, SHOTS, "11-expert-writes-the-answer");
    await work.getByRole("button", { name: "Send the answer" }).click();
    await exp
      .getByText(/answer|Answered/i)
      .first()
      .waitFor();

    // the technician's open page gets the answer without a reload (the live room's status message)
    await tech.getByRole("heading", { name: "Did the fix work?" }).waitFor({ timeout: 15_000 });
    await tech
      .getByText(/Coil 2 breaking down/)
      .first()
      .waitFor();
    await shot(tech, SHOTS, "12-tech-reads-the-answer");
    const form = tech.locator("form").filter({ has: tech.getByRole("radiogroup", { name: "Fix result" }) });
    await form.getByRole("radio", { name: "Yes, it is fixed" }).check();
    await form.getByRole("button", { name: "5", exact: true }).click();
    await form.getByRole("button", { name: "Report the result", exact: true }).click();
    await tech.getByText("Fix confirmed").first().waitFor({ timeout: 20_000 });
    await shot(tech, SHOTS, "13-fix-confirmed");
  });

  test("7. the entry is found in the casebook by its code, anonymised", async () => {
    expect(caseId, "step 1 made the case").not.toBe("");
    await tech.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Casebook" }).click();
    await tech.getByRole("heading", { name: "Casebook", level: 1 }).waitFor();
    await tech.getByLabel("Search the casebook").fill(CODE);
    await tech.getByLabel("Search the casebook").press("Enter");
    await tech.getByRole("heading", { name: "1 case", exact: true }).waitFor({ timeout: 20_000 });
    const hit = tech.getByRole("article").filter({ hasText: "Veltra Orvane" });
    await hit.waitFor();
    expect(await hit.innerText()).toContain(CODE);
    await shot(tech, SHOTS, "14-casebook-search-by-code");
    await hit.getByRole("link").first().click();
    await tech
      .getByText(/Coil 2 breaking down/)
      .first()
      .waitFor();
    const text = await tech.locator("main").innerText();
    // anonymised: no shop, no people, no VIN serial (positions 12–17)
    for (const secret of ["Millrace", "Jo Brennan", "Petra Lowe", "Rosa Quint", VIN, VIN.slice(11)])
      expect(text, secret).not.toContain(secret);
    await shot(tech, SHOTS, "15-casebook-entry");
  });

  test("8. the pages fit phone (390 px) and tablet (820 px) widths", async () => {
    expect(caseId, "step 1 made the case").not.toBe("");
    const pages: [Page, string][] = [
      [tech, "/"],
      [tech, "/cases"],
      [tech, "/cases/new"],
      [tech, `/cases/${caseId}`],
      [tech, "/casebook"],
      [exp, "/queue"],
      [exp, `/cases/${caseId}`],
    ];
    for (const width of [390, 820]) {
      for (const [page, p] of pages) {
        await page.setViewportSize({ width, height: width < 500 ? 844 : 1180 });
        await page.goto(server.url + p);
        await page.locator("main").waitFor();
        await page.waitForLoadState("networkidle");
        // nothing wider than the screen: no sideways scrolling of the page itself
        const scrollWidth = await page.evaluate<number>("document.documentElement.scrollWidth");
        expect(scrollWidth, `${p} at ${width} px`).toBeLessThanOrEqual(width);
      }
      // the notices panel opens inside the screen
      await tech.getByRole("button", { name: /^Notices/ }).click();
      const panel = tech.locator(
        `#${await tech.getByRole("button", { name: /^Notices/ }).getAttribute("aria-controls")}`,
      );
      await panel.waitFor();
      const box = (await panel.boundingBox())!;
      expect(box.x, `notices panel left edge at ${width} px`).toBeGreaterThanOrEqual(0);
      expect(box.x + box.width, `notices panel right edge at ${width} px`).toBeLessThanOrEqual(width);
      await shot(tech, SHOTS, `16-notices-at-${width}`, { viewport: true });
      await tech.keyboard.press("Escape");
    }
    await tech.setViewportSize({ width: 1280, height: 900 });
    await exp.setViewportSize({ width: 1280, height: 900 });
  });

  test("no uncaught errors in either browser along the way", () => {
    expect(errors).toEqual([]);
  });
});
