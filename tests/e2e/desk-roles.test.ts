/**
 * The desk as each role uses it (issue 13), in headless Chromium at a phone's 390 px, a tablet's
 * 820 px and a desk's 1440 px:
 * - the technician fills in the draft form and pays from it: the form leads to the checkout;
 * - the admin lists every shop's cases, opens the one just paid and refunds it after a reason and a
 *   review step; the shop's billing shows the hold released;
 * - a new chat message from the expert shows on the technician's open page as a notice, and on the
 *   home's case as unread, without a reload;
 * - no page any role can reach scrolls sideways; signed-out pages log no console error;
 * - a screenshot of every page at each width is kept under test-results/screenshots/.
 * Payments go through the project's Stripe fake with Stripe's published test card 4242 4242 4242 4242
 * (docs.stripe.com/testing#cards).
 */
import fs from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, test } from "vitest";
import type { BrowserContext, Page } from "playwright-core";
import { createAdmin, createExpert, createShopTeam, signIn, type ShopTeam, type SignedInAgent } from "../factories";
import { insertDraftCase, submitAndPay } from "../helpers/queue-flow";
import type { TestServer } from "../helpers/test-app";
import { ask, connected, insertLiveCase, liveClient, type LiveClient } from "../integration/realtime-helpers";
import { generateSecondary } from "../../demo/generators/secondary";
import { renderCsv } from "../../demo/generators/csv";
import { launchBrowser, startE2EServer, watchErrors, type E2EServer, type LaunchedBrowser } from "./helpers/browser";

const WIDTHS = [390, 820, 1440] as const;
const SHOTS = path.resolve("test-results", "screenshots");
fs.rmSync(SHOTS, { recursive: true, force: true });
fs.mkdirSync(SHOTS, { recursive: true });

let server: E2EServer;
let launched: LaunchedBrowser;
let shopA: ShopTeam;
let shopB: ShopTeam;
let agents: Record<"tech" | "owner" | "expert" | "admin", SignedInAgent>;
let pages: Record<"tech" | "owner" | "expert" | "admin" | "anon", Page>;
let expertSocket: LiveClient;
const contexts: BrowserContext[] = [];
const errors: string[] = [];
const anonConsole: string[] = [];
const seeded = { claimed: "", answered: "", queuedB: "", receipt: "" };
const paidAt: Record<number, string> = {};

/** A browser context signed in as `agent` (its session cookie, no sign-in form: the sign-in limit stays untouched). */
async function contextOf(agent: SignedInAgent | null, label: string): Promise<Page> {
  const ctx = await launched.browser.newContext({ viewport: { width: 1440, height: 900 } });
  contexts.push(ctx);
  if (agent) {
    await ctx.addCookies(
      agent.cookie.split("; ").map((c) => {
        const i = c.indexOf("=");
        return {
          name: c.slice(0, i),
          value: c.slice(i + 1),
          url: server.url,
          httpOnly: true,
          sameSite: "Lax" as const,
        };
      }),
    );
    watchErrors(ctx, errors, label);
  }
  return ctx.newPage();
}

const heightOf = (w: number) => (w < 500 ? 844 : w < 1000 ? 1180 : 900);

async function atWidth(page: Page, w: number): Promise<void> {
  await page.setViewportSize({ width: w, height: heightOf(w) });
}

/** Goes to `p`, waits for the page to settle, checks nothing scrolls sideways, keeps a screenshot. */
async function visit(page: Page, p: string, w: number, name: string): Promise<void> {
  await page.goto(server.url + p);
  await page.locator("main").waitFor();
  await page.waitForLoadState("networkidle");
  await page.waitForTimeout(150);
  const scrollWidth = await page.evaluate<number>("document.documentElement.scrollWidth");
  expect(scrollWidth, `${name} (${p}) at ${w} px scrolls sideways`).toBeLessThanOrEqual(w);
  await page.screenshot({ path: path.join(SHOTS, `${name}-${w}.png`), fullPage: true });
}

async function payOnFakeCheckout(page: Page): Promise<void> {
  await page.waitForURL(/\/checkout\/cs_/);
  await page.getByLabel("Card number").fill("4242 4242 4242 4242");
  await page.getByLabel("Expiry (MM / YY)").fill("12 / 34");
  await page.getByLabel("CVC").fill("123");
  await page.getByRole("button", { name: "Pay" }).click();
}

beforeAll(async () => {
  server = await startE2EServer();
  const test = server as unknown as TestServer;
  shopA = await createShopTeam(server, { name: "Fernhollow Garage", technicians: 1 });
  shopB = await createShopTeam(server, { name: "Brackwater Motors", technicians: 1 });
  const expert = await createExpert(server, { name: "Rosa Quint", systems: ["ignition"], makes: ["Veltra"] });
  agents = {
    tech: await signIn(server, shopA.technicians[0]),
    owner: await signIn(server, shopA.owner),
    expert: await signIn(server, expert),
    admin: await signIn(server, await createAdmin(server)),
  };
  // a case the expert works on now (chat), one answered and charged (a receipt, earnings), one of another shop
  seeded.claimed = (
    await insertLiveCase(server.ctx, {
      shopId: shopA.shop.id,
      createdBy: shopA.technicians[0].id,
      expertId: expert.id,
    })
  ).caseId;
  seeded.answered = await insertDraftCase(test, { shopId: shopA.shop.id, createdBy: shopA.technicians[0].id });
  // one secondary-ignition capture (the project's generator: 2000 rpm, 1.5 ms burn) for the report's figure
  const capture = generateSecondary({
    seed: 7,
    sampleRateHz: 500_000,
    rpm: 2000,
    events: 2,
    kvPerVolt: 10,
    burnTimeMs: 1.5,
  });
  const up = await agents.tech
    .post(`/api/cases/${seeded.answered}/traces`)
    .field(
      "settings",
      JSON.stringify({ kind: "secondary-ignition", voltsPerDiv: 1, timePerDivS: 0.002, kvPerVolt: 10 }),
    )
    .attach("file", Buffer.from(renderCsv(capture.trace, { timeUnit: "ms" })), {
      filename: "coil3.csv",
      contentType: "text/csv",
    });
  expect(up.status, JSON.stringify(up.body)).toBe(201);
  await submitAndPay(test, agents.tech, seeded.answered);
  expect((await agents.expert.post(`/api/cases/${seeded.answered}/claim`)).status).toBe(200);
  const answer = {
    diagnosis: "Coil 3 breaks down under load.",
    rootCause: "Tracking through the boot of coil 3.",
    recommendedFix: "Replace coil 3 and its boot.",
    testsToConfirm: "Burn time of coil 3 within 10 % of the others at 2500 rpm.",
  };
  expect((await agents.expert.post(`/api/cases/${seeded.answered}/answer`).send(answer)).status).toBe(201);
  await server.fakeStripe!.idle();
  const billing = await agents.owner.get("/api/billing");
  seeded.receipt = billing.body.payments.find((p: { caseId: string }) => p.caseId === seeded.answered).id;
  seeded.queuedB = await insertDraftCase(test, {
    shopId: shopB.shop.id,
    createdBy: shopB.technicians[0].id,
    make: "Korrin",
  });
  await submitAndPay(test, await signIn(server, shopB.technicians[0]), seeded.queuedB);

  launched = await launchBrowser();
  pages = {
    tech: await contextOf(agents.tech, "tech"),
    owner: await contextOf(agents.owner, "owner"),
    expert: await contextOf(agents.expert, "expert"),
    admin: await contextOf(agents.admin, "admin"),
    anon: await contextOf(null, "anon"),
  };
  pages.anon.on("console", (m) => m.type() === "error" && anonConsole.push(`${m.text()} @ ${pages.anon.url()}`));
  pages.anon.on("pageerror", (e) => anonConsole.push(`pageerror: ${String(e)}`));
  expertSocket = await connected(
    liveClient(server.url.replace("localhost", "127.0.0.1"), { cookie: agents.expert.cookie }),
  );
  const joined = await ask(expertSocket, "case:join", { caseId: seeded.claimed, since: 0 });
  expect(joined.ok, JSON.stringify(joined)).toBe(true);
});

afterAll(async () => {
  expertSocket?.disconnect();
  for (const c of contexts) await c.close().catch(() => {});
  await launched?.close();
  await server?.close();
});

describe.sequential.each(WIDTHS)("at %i px", (w) => {
  test("the technician fills in the draft form and pays from it", async () => {
    const tech = pages.tech;
    await atWidth(tech, w);
    await tech.goto(server.url + "/cases/new");
    await tech.getByRole("heading", { name: "Open a case" }).waitFor();
    await tech.getByRole("textbox", { name: "Make", exact: true }).fill("Veltra");
    await tech.getByRole("textbox", { name: "Model", exact: true }).fill(`Orvane ${w}`);
    await tech.getByRole("textbox", { name: "What the customer reports" }).fill("Misfire under load, worse when hot.");
    await tech.getByRole("radio", { name: "Ignition" }).check();
    await tech.getByRole("button", { name: "Save draft" }).click();
    await tech.waitForURL(/\/cases\/[^/]+\/edit$/);
    paidAt[w] = /\/cases\/([^/]+)\/edit$/.exec(new URL(tech.url()).pathname)![1];
    const pay = tech.getByRole("button", { name: /^Pay \$[\d.]+ and submit$/ });
    await expect.poll(() => pay.isEnabled(), { timeout: 15_000 }).toBe(true);
    await tech.screenshot({ path: path.join(SHOTS, `tech-draft-ready-to-pay-${w}.png`), fullPage: true });
    await pay.click();
    await payOnFakeCheckout(tech);
    await tech.waitForURL((u) => u.pathname === `/cases/${paidAt[w]}`);
    await tech.getByText("Payment confirmed: your case is in the queue").waitFor({ timeout: 60_000 });
    await tech.screenshot({ path: path.join(SHOTS, `tech-paid-and-queued-${w}.png`), fullPage: true });
  });

  test("the admin lists every shop's cases, opens the new one, refunds it; billing shows it", async () => {
    expect(paidAt[w], "the technician's case of this width").toBeTruthy();
    const admin = pages.admin;
    await atWidth(admin, w);
    await admin.goto(server.url + "/");
    await admin.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Cases" }).click();
    await admin.getByRole("heading", { name: "All cases", level: 1 }).waitFor();
    // both shops' cases are listed (a shop's own list never shows another's)
    await admin.getByText("Brackwater Motors", { exact: true }).filter({ visible: true }).first().waitFor();
    const link = admin.getByRole("link", { name: new RegExp(`Orvane ${w}`) }).first();
    await link.waitFor();
    await admin.screenshot({ path: path.join(SHOTS, `admin-all-cases-${w}.png`), fullPage: true });
    await link.click();
    await admin.waitForURL((u) => u.pathname === `/cases/${paidAt[w]}`);
    const desk = admin.getByRole("region", { name: "The desk's view" });
    await desk.waitFor();
    // the admin's words: no expert's controls on the page
    expect(await admin.getByText("Your work on this case").count()).toBe(0);
    expect(await admin.getByRole("button", { name: "Hand back to the queue" }).count()).toBe(0);
    await desk.getByRole("button", { name: "Refund the payment…" }).click();
    const step = admin.getByRole("region", { name: "Refund the payment" });
    await step.getByLabel("Reason").fill("Opened by mistake; the shop asked for its money back.");
    await step.getByRole("button", { name: "Review" }).click();
    await step.getByText(/^Release the \$49\.00 hold on Fernhollow Garage's card\./).waitFor();
    await admin.screenshot({ path: path.join(SHOTS, `admin-refund-review-${w}.png`), fullPage: true });
    await step.getByRole("button", { name: "Yes, release $49.00" }).click();
    await desk.getByText("Done: hold released, nothing charged.").waitFor({ timeout: 30_000 });
    await admin.getByText("Closed, no charge").first().waitFor();
    await desk.getByRole("link", { name: "its billing" }).click();
    await admin.getByRole("heading", { name: "Billing", level: 1 }).waitFor();
    const payments = admin.getByRole(w < 768 ? "list" : "table", { name: /Payments, newest first/ });
    const row = payments.getByRole(w < 768 ? "listitem" : "row").filter({ hasText: `Orvane ${w}` });
    await row.waitFor();
    expect(await row.innerText()).toMatch(/Hold released, nothing charged/);
    await admin.screenshot({ path: path.join(SHOTS, `admin-billing-after-refund-${w}.png`), fullPage: true });
  });

  test("a new chat message shows on the technician's open page without a reload", async () => {
    const tech = pages.tech;
    await atWidth(tech, w);
    await tech.goto(server.url + "/");
    const open = tech.getByRole("region", { name: "Open and live cases" });
    await open.waitFor();
    const card = open.getByRole("link", { name: /Veltra Sorrel/ });
    await card.waitFor();
    const bell = tech.getByRole("button", { name: /^Notices/ });
    await tech.waitForLoadState("networkidle");
    const before = await bell.innerText();
    // the expert writes in the case's chat (another machine, over the live connection)
    const sent = await ask(expertSocket, "chat:send", {
      text: `Capture coil 2 at 2500 rpm, please (${w}).`,
      clientId: `e2e-msg-${w}`,
    });
    expect(sent.ok, JSON.stringify(sent)).toBe(true);
    // no reload: the notice count and the case's unread messages change on the open page
    await expect.poll(() => bell.innerText(), { timeout: 15_000 }).not.toBe(before);
    await card.getByText(/\d+ messages? new/).waitFor({ timeout: 15_000 });
    await bell.click();
    const panel = tech.locator(`#${await bell.getAttribute("aria-controls")}`);
    await panel
      .getByText(/^(New message from Rosa Quint|\d+ new messages): /)
      .first()
      .waitFor();
    await tech.screenshot({ path: path.join(SHOTS, `tech-notice-of-new-message-${w}.png`) });
    // read them all, so the next width starts from no unread notice
    await panel.getByRole("button", { name: "Mark all read" }).click();
    await expect.poll(() => bell.innerText()).toBe("Notices");
    await tech.keyboard.press("Escape");
  });

  test("no page of any role scrolls sideways (a screenshot of each)", async () => {
    const visits: [keyof typeof pages, string, string][] = [
      ["tech", "/", "tech-home"],
      ["tech", "/cases", "tech-cases"],
      ["tech", "/cases/new", "tech-new-case"],
      ["tech", `/cases/${seeded.claimed}`, "tech-case-live"],
      ["tech", `/cases/${seeded.answered}`, "tech-case-answered"],
      ["tech", "/casebook", "tech-casebook"],
      ["tech", "/team", "tech-team"],
      ["tech", "/settings/notices", "tech-notice-settings"],
      ["owner", "/", "owner-home"],
      ["owner", "/billing", "owner-billing"],
      ["owner", `/billing/receipts/${seeded.receipt}`, "owner-receipt"],
      ["owner", `/cases/${seeded.answered}/report`, "owner-report"],
      ["owner", "/team", "owner-team"],
      ["expert", "/", "expert-home"],
      ["expert", "/queue", "expert-queue"],
      ["expert", "/earnings", "expert-earnings"],
      ["expert", `/cases/${seeded.claimed}`, "expert-case-live"],
      ["expert", "/casebook", "expert-casebook"],
      ["admin", "/", "admin-home"],
      ["admin", "/cases", "admin-cases"],
      ["admin", "/queue", "admin-queue"],
      ["admin", `/cases/${seeded.queuedB}`, "admin-case-queued"],
      ["admin", `/billing?shopId=${shopA.shop.id}`, "admin-billing"],
      ["admin", "/admin/experts", "admin-experts"],
      ["admin", "/admin/pricing", "admin-pricing"],
      ["admin", "/settings/notices", "admin-notice-settings"],
      ["anon", "/sign-in", "signed-out-sign-in"],
      ["anon", "/sign-up", "signed-out-sign-up"],
      ["anon", "/apply", "signed-out-apply"],
      ["anon", "/forgot-password", "signed-out-forgot-password"],
    ];
    for (const [role, p, name] of visits) {
      await atWidth(pages[role], w);
      await visit(pages[role], p, w, name);
    }
    // the printed report's figure: drawn at its own width (its 11 px type stays 11 px), every time
    // label inside the drawing, the last one included
    await atWidth(pages.owner, w);
    await pages.owner.goto(`${server.url}/cases/${seeded.answered}/report`);
    const figure = pages.owner.locator("figure svg").first();
    await figure.waitFor({ timeout: 20_000 });
    // (evaluated in the page as text: this file is type-checked without the DOM's types)
    const drawing = await pages.owner.evaluate<{
      viewBoxWidth: number;
      width: number;
      left: number;
      right: number;
      labels: { text: string; left: number; right: number }[];
    }>(`(() => {
      const svg = document.querySelector("figure svg");
      const box = svg.getBoundingClientRect();
      const labels = [...svg.querySelectorAll("text")].map((t) => {
        const r = t.getBoundingClientRect();
        return { text: t.textContent || "", left: r.left, right: r.right };
      });
      return { viewBoxWidth: svg.viewBox.baseVal.width, width: box.width, left: box.left, right: box.right, labels };
    })()`);
    expect(Math.abs(drawing.viewBoxWidth - drawing.width), "one drawing unit per pixel").toBeLessThanOrEqual(1);
    for (const l of drawing.labels) {
      expect(l.left, `label ${l.text} starts inside`).toBeGreaterThanOrEqual(drawing.left - 0.5);
      expect(l.right, `label ${l.text} ends inside`).toBeLessThanOrEqual(drawing.right + 0.5);
    }
    // the money is in view on a phone: amount, state and receipt of each payment; "You" of each earning
    if (w === 390) {
      await pages.owner.goto(`${server.url}/billing`);
      const cards = pages.owner.getByRole("list", { name: /Payments, newest first/ }).getByRole("listitem");
      const card = cards.filter({ hasText: "Receipt: BL-" }).first();
      await card.waitFor();
      for (const text of [/\$49\.00/, /Charged/, /Receipt: BL-/]) await card.getByText(text).first().waitFor();
      await pages.expert.goto(`${server.url}/earnings`);
      const earning = pages.expert
        .getByRole("list", { name: /your share of each/ })
        .getByRole("listitem")
        .first();
      await earning.getByText("You", { exact: true }).waitFor();
    }
  });
});

describe("signed out and along the way", () => {
  test("no console error on a signed-out page", () => {
    expect(anonConsole).toEqual([]);
  });
  test("no uncaught error or console error on the signed-in pages", () => {
    expect(errors).toEqual([]);
  });
});
