/**
 * Shared pieces of the browser tests: Debian's Chromium through playwright-core (headless, no
 * downloads), a server on a random port with its own temporary database serving the built client,
 * and screenshots kept under test-results/e2e/.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { chromium, type Browser, type BrowserContext, type Page } from "playwright-core";
import { startServer, type RunningServer } from "../../../server/index";

export const CHROMIUM_PATH = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";

export const CHROMIUM_ARGS = [
  "--no-sandbox",
  "--disable-gpu",
  "--disable-quic",
  "--no-first-run",
  "--disable-background-networking",
  "--disable-component-update",
  "--disable-sync",
];

export interface LaunchedBrowser {
  browser: Browser;
  close(): Promise<void>;
}

/**
 * Headless Chromium from the system. Each launch runs on a fresh, empty user-data directory
 * (playwright-core makes a temporary profile per launch and removes it on close; it refuses a
 * --user-data-dir of our own outside launchPersistentContext). New contexts made from `browser`
 * are isolated from each other (cookies, storage), like two people on two machines.
 */
export async function launchBrowser(): Promise<LaunchedBrowser> {
  if (!fs.existsSync(CHROMIUM_PATH)) {
    throw new Error(
      `No Chromium at ${CHROMIUM_PATH}. Install Debian's package (apt-get install chromium) or set CHROMIUM_PATH.`,
    );
  }
  const browser = await chromium.launch({ executablePath: CHROMIUM_PATH, headless: true, args: CHROMIUM_ARGS });
  return {
    browser,
    async close() {
      await browser.close().catch(() => {});
    },
  };
}

export interface E2EServer extends RunningServer {
  dir: string;
}

/**
 * The app on 127.0.0.1 with a random port, a temporary SQLite file and data directory, the mail
 * catcher and the Stripe fake on random ports, serving dist/client (build it first:
 * `npx vite build`). DEMO is off unless overridden; seed what a test needs with the factories.
 */
export async function startE2EServer(overrides: Record<string, string> = {}): Promise<E2EServer> {
  if (!fs.existsSync(path.resolve("dist/client/index.html"))) {
    throw new Error("dist/client is missing: build the client first (npx vite build).");
  }
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-e2e-"));
  const server = await startServer({
    NODE_ENV: "development",
    PORT: "0",
    HOST: "127.0.0.1",
    DATABASE_URL: path.join(dir, "db.sqlite"),
    DATA_DIR: dir,
    MAIL_CATCHER_PORT: "0",
    FAKE_STRIPE_PORT: "0",
    LOG_LEVEL: "silent",
    DEMO: "false",
    ...overrides,
  });
  return {
    ...server,
    dir,
    async close() {
      await server.close();
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** Where a test's screenshots go: test-results/e2e/<name>/, emptied first (no stale steps). */
export function screenshotDir(name: string): string {
  const dir = path.resolve("test-results", "e2e", name);
  fs.rmSync(dir, { recursive: true, force: true });
  fs.mkdirSync(dir, { recursive: true });
  return dir;
}

/** PNG `<step>.png` in `dir` (the whole page unless `viewport` is set); returns its path. */
export async function shot(page: Page, dir: string, step: string, opts: { viewport?: boolean } = {}): Promise<string> {
  const file = path.join(dir, `${step}.png`);
  await page.screenshot({ path: file, fullPage: !opts.viewport });
  return file;
}

/** Collects uncaught page errors and console errors of every page of a context. */
export function watchErrors(context: BrowserContext, into: string[], label: string): void {
  context.on("page", (p) => attach(p, into, label));
  for (const p of context.pages()) attach(p, into, label);
}

function attach(page: Page, into: string[], label: string) {
  page.on("pageerror", (e) => into.push(`${label} pageerror: ${String(e)}`));
  page.on("console", (m) => {
    // a failed request shows as "Failed to load resource" (e.g. the 401 of a signed-out /api/me): not a page error
    if (m.type() === "error" && !m.text().startsWith("Failed to load resource"))
      into.push(`${label} console: ${m.text()}`);
  });
}

/** Signs in through the sign-in page. */
export async function signInThroughPage(page: Page, baseUrl: string, email: string, password: string): Promise<void> {
  await page.goto(baseUrl + "/sign-in");
  await page.getByLabel("E-mail address").fill(email);
  await page.getByLabel("Password", { exact: true }).fill(password);
  await page.getByRole("button", { name: "Sign in", exact: true }).click();
  await page.waitForURL((u) => !u.pathname.startsWith("/sign-in"));
}
