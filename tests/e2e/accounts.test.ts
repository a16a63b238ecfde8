import { afterAll, beforeAll, expect, test } from "vitest";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { build } from "vite";
import { chromium, type Browser } from "playwright-core";
import { startServer, type RunningServer } from "../../server/index";
import { demoPlugin } from "../../demo/plugin";

// The browser criterion: a new user signs up a shop, clicks the verification link in
// /dev/mail, signs in and invites a technician — here at phone width (390 px), then the invited
// technician joins at tablet width (820 px). Chromium from the system (CHROMIUM_PATH overrides).

const executablePath = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";
let server: RunningServer;
let browser: Browser;
let dir: string;
const pageErrors: string[] = [];

beforeAll(async () => {
  await build({ configFile: path.resolve("vite.config.ts"), logLevel: "error" });
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-e2e-accounts-"));
  server = await startServer(
    {
      NODE_ENV: "development",
      PORT: "0",
      HOST: "127.0.0.1",
      DATABASE_URL: path.join(dir, "db.sqlite"),
      DATA_DIR: dir,
      MAIL_CATCHER_PORT: "0",
      FAKE_STRIPE_PORT: "0",
      LOG_LEVEL: "silent",
      DEMO: "true",
    },
    undefined,
    { demo: demoPlugin },
  );
  // the demo is seeded before the server reports ready (as `npm start` does)
  await server.ready;
  browser = await chromium.launch({ executablePath, args: ["--no-sandbox"] });
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
});

test("sign up a shop, verify from /dev/mail, sign in, invite a technician who then joins", async () => {
  const base = server.url;
  const ownerCtx = await browser.newContext({ viewport: { width: 390, height: 844 } });
  const page = await ownerCtx.newPage();
  page.on("pageerror", (e) => pageErrors.push(String(e)));

  await page.goto(base + "/");
  await page.waitForURL("**/sign-in"); // signed-out visitors are sent to sign-in
  await page.getByRole("link", { name: "Sign up your shop" }).click();
  await page.getByLabel("Shop name").fill("Millbrook Garage");
  await page.getByLabel("Your name").fill("Sam Ortega");
  await page.getByLabel("E-mail address").fill("sam@millbrook.test");
  await page.getByLabel("Password", { exact: true }).fill("password1");
  await page.getByRole("button", { name: "Create the shop" }).click();
  // the shared schema refuses a common password before anything is sent
  await page.getByText(/most common passwords/).waitFor();
  await page.getByLabel("Password", { exact: true }).fill("Millbrook-coil-pack-9");
  await page.getByLabel("Password", { exact: true }).press("Enter");
  await page.getByRole("heading", { name: "Check your e-mail" }).waitFor();

  await page.goto(base + "/dev/mail");
  await page.locator('a[href*="/api/auth/verify-email"]').first().click();
  await page.waitForURL("**/sign-in?verified=1");
  await page.getByText("E-mail address confirmed").waitFor();
  await page.getByLabel("E-mail address").fill("sam@millbrook.test");
  await page.getByLabel("Password", { exact: true }).fill("Millbrook-coil-pack-9");
  await page.getByRole("button", { name: "Sign in", exact: true }).click();
  await page.getByRole("heading", { name: "Hello, Sam" }).waitFor();

  await page.getByRole("link", { name: "Manage the team" }).click();
  await page.getByLabel("Technician's e-mail").fill("jo@millbrook.test");
  await page.getByRole("button", { name: "Send invitation" }).click();
  await page.getByText("Invitation sent").waitFor();
  expect(await page.getByText("jo@millbrook.test").count()).toBeGreaterThan(0);
  // nothing wider than the phone's viewport
  expect(await page.evaluate<number>("document.documentElement.scrollWidth")).toBeLessThanOrEqual(390);

  const techCtx = await browser.newContext({ viewport: { width: 820, height: 1180 } });
  const tech = await techCtx.newPage();
  tech.on("pageerror", (e) => pageErrors.push(String(e)));
  await tech.goto(base + "/dev/mail");
  await tech.locator('a[href*="/accept-invite?token="]').first().click();
  await tech.getByRole("heading", { name: "Join Millbrook Garage" }).waitFor();
  await tech.getByLabel("Your name").fill("Jo Brand");
  await tech.getByLabel("Choose a password").fill("Jo-at-the-bay-2024x");
  await tech.getByRole("button", { name: /Join Millbrook/ }).click();
  await tech.getByRole("heading", { name: "Hello, Jo" }).waitFor();
  const me = await tech.evaluate(() => fetch("/api/me").then((r) => r.json()));
  expect(me).toMatchObject({ email: "jo@millbrook.test", role: "technician" });

  await page.reload();
  await page.getByText("Jo Brand").waitFor();
  expect(pageErrors).toEqual([]);
  await ownerCtx.close();
  await techCtx.close();
});

test("a demo account signs in from the keyboard on the sign-in page", async () => {
  const ctx = await browser.newContext({ viewport: { width: 820, height: 1180 } });
  const page = await ctx.newPage();
  await page.goto(server.url + "/sign-in");
  await page.getByRole("button", { name: /admin@burnline\.test/ }).focus();
  await page.keyboard.press("Enter");
  await page.getByRole("heading", { name: "Experts awaiting approval" }).waitFor();
  expect(await page.evaluate(() => fetch("/api/me").then((r) => r.json()))).toMatchObject({
    email: "admin@burnline.test",
    role: "admin",
    shopId: null,
  });
  await ctx.close();
});

// Issue 13 (first run): every signed-out page logged a console error for `GET /api/me` → 401.
// The session probe answers 200 when signed out, so a signed-out visitor's console stays clean.
test("signed-out pages log no console error", async () => {
  const ctx = await browser.newContext({ viewport: { width: 390, height: 844 } });
  const page = await ctx.newPage();
  const errors: string[] = [];
  page.on("console", (m) => {
    if (m.type() === "error") errors.push(`${page.url()}: ${m.text()}`);
  });
  page.on("pageerror", (e) => errors.push(`${page.url()}: ${String(e)}`));
  for (const path of ["/", "/sign-in", "/sign-up", "/apply", "/forgot-password", "/cases"]) {
    await page.goto(server.url + path);
    await page.getByRole("heading").first().waitFor();
    await page.waitForLoadState("networkidle");
  }
  expect(errors).toEqual([]);
  await ctx.close();
});

// Issue 12 item 11: the form shows why a password is refused, live while typing (the estimator's
// dictionaries load on demand) and on submit, with the same rule the server applies.
test("the sign-up form explains why a password is refused", async () => {
  const ctx = await browser.newContext({ viewport: { width: 390, height: 844 } });
  const page = await ctx.newPage();
  const scripts: string[] = [];
  page.on("request", (r) => r.resourceType() === "script" && scripts.push(r.url()));
  await page.goto(server.url + "/sign-in");
  await page.getByRole("heading", { name: "Sign in" }).waitFor();
  const firstPage = scripts.length;
  await page.goto(server.url + "/sign-up");
  await page.getByLabel("Shop name").fill("Ashgrove Bay");
  await page.getByLabel("Your name").fill("Rae Lund");
  await page.getByLabel("E-mail address").fill("rae@ashgrove.test");
  await page.getByLabel("Password", { exact: true }).fill("burnline-demo");
  const meter = page.getByTestId("password-strength");
  await meter.getByText(/Burnline's own name/).waitFor();
  // the dictionaries came later than the first page, as separate scripts
  expect(scripts.length).toBeGreaterThan(firstPage);
  await page.getByRole("button", { name: "Create the shop" }).click();
  await page
    .getByText(/Burnline's own name/)
    .first()
    .waitFor();
  await page.getByLabel("Password", { exact: true }).fill("Quiet-lathe-orbit-73");
  await meter.getByText(/hard to guess\./i).waitFor();
  await ctx.close();
});
