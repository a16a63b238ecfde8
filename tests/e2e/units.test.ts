import { afterAll, beforeAll, describe, expect, test } from "vitest";
import path from "node:path";
import request from "supertest";
import { eq } from "drizzle-orm";
import type { BrowserContext, Page } from "playwright-core";
import { schema } from "../../server/db/client";
import { createExpert, createShopTeam, signIn, type SignedInAgent } from "../factories";
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
 * One unit model in every view (issue 11), in a real browser at 820 px: a secondary capture in
 * pickup volts with a 10 kV/V pickup, one exported already in kV (the same pickup scale stated, not
 * applied again) and a starter-current capture through a 100 mV/A clamp each read one unit — kV,
 * kV and A — across the plot's level axis and its per-division text, the cursor readout, a level
 * mark (its prompt, its list entry and what is stored), the measurement table, the capture review
 * and the capture settings; the comparison of the four cylinders names the odd one in plain words,
 * with the statistic one click away.
 *
 * The captures are generated here from physics, with these stated parameters:
 * - secondary ignition, kV at the plug: a breakdown modelled as an alpha function
 *   V_peak·(t/τ)·e^(1−t/τ) with τ = 10 µs (its maximum is V_peak at t = τ), held at the spark line
 *   V_burn for the burn time, then the coil's damped LC ringing at f = 1/(2π√(LC)) with L = 20 H,
 *   C = 50 pF (≈ 5.0 kHz) and τ = 0.3 ms; a dwell step of −0.2·V_burn 3 ms before each firing;
 *   two firings 40 ms apart (one coil fires once per 720°: 120/0.040 s = 3000 rpm); ±0.01 kV noise;
 *   1 MS/s, 50 ms. The pickup's output is kV ÷ 10 kV/V (a capacitive pickup's scale, common
 *   practice, no source). Firing lines 10.0, 10.4, 6.0 and 9.7 kV; burn times 1.6, 1.55, 0.9 and
 *   1.62 ms: cylinder 3's firing line is 40 % below the others' and its burn 44 % shorter.
 * - starter current through the clamp: key-on at 0.1 s, an inrush of 550 A decaying (τ = 25 ms) to
 *   150 A of cranking current, plus one 80·sin² hump per compression stroke (200 rpm, 4 cylinders:
 *   a stroke every 120/(200·4) = 0.15 s), the third stroke of every four at 60 %; ±1.5 A noise;
 *   5 kS/s, 1.6 s. The clamp's output is A × 0.1 V/A (100 mV/A).
 *
 * The first test checks what the viewer draws and says (this helper's part); the second the tables
 * and the capture review, whose numbers and messages come from the analysis (shared/analysis); the
 * third the comparison's plain-words statement. The second and third depend on the analysis's unit
 * model and statements and may only pass once that work is merged.
 */

const W = 820;
const H = 1180;
const KV_PER_V = 10;
const MV_PER_A = 100;

// ---------------------------------------------------------------------------------------------
// the physics models

function noiseSource(seed: number): () => number {
  let s = seed >>> 0;
  return () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32) * 2 - 1;
}

interface Firing {
  peakKv: number;
  burnKv: number;
  burnMs: number;
}

const RATE_SEC = 1_000_000;
const FIRES = [0.005, 0.045];

/** kV at the plug (model above). */
function secondaryKv(f: Firing, seed: number): Float64Array {
  const n = Math.round(0.05 * RATE_SEC);
  const out = new Float64Array(n);
  const noise = noiseSource(seed);
  const tauR = 10e-6;
  const fRing = 1 / (2 * Math.PI * Math.sqrt(20 * 50e-12));
  const tauRing = 0.3e-3;
  const burnS = f.burnMs / 1000;
  for (let i = 0; i < n; i++) {
    const t = i / RATE_SEC;
    let v = 0;
    for (const tf of FIRES) {
      const u = t - tf;
      if (u >= -3e-3 && u < 0) v += -0.2 * f.burnKv * (1 - Math.exp(-(u + 3e-3) / 0.2e-3));
      else if (u >= 0 && u < burnS) v += Math.max(f.peakKv * (u / tauR) * Math.exp(1 - u / tauR), f.burnKv);
      else if (u >= burnS && u < burnS + 3e-3)
        v += 1.5 * f.burnKv * Math.exp(-(u - burnS) / tauRing) * Math.cos(2 * Math.PI * fRing * (u - burnS));
    }
    out[i] = v + 0.01 * noise();
  }
  return out;
}

const RATE_CRANK = 5000;

/** Starter current in A (model above). */
function starterA(seed: number): Float64Array {
  const n = Math.round(1.6 * RATE_CRANK);
  const out = new Float64Array(n);
  const noise = noiseSource(seed);
  const P = 120 / (200 * 4);
  for (let i = 0; i < n; i++) {
    const t = i / RATE_CRANK;
    let a = 0;
    if (t >= 0.1) {
      const u = t - 0.1;
      const k = Math.floor(u / P);
      const h = k % 4 === 2 ? 0.6 : 1;
      a = 150 + 400 * Math.exp(-u / 0.025) + 80 * h * Math.sin((Math.PI * (u - k * P)) / P) ** 2;
    }
    out[i] = a + 1.5 * noise();
  }
  return out;
}

function csv(head: string, values: Float64Array, rate: number, digits: number): string {
  const lines = [head];
  for (let i = 0; i < values.length; i++) lines.push(`${(i / rate).toFixed(7)},${values[i].toFixed(digits)}`);
  return lines.join("\n") + "\n";
}

// ---------------------------------------------------------------------------------------------
// the captures and what each must read

interface Capture {
  file: string;
  /** the trace's label on the page */
  label: string;
  text: string;
  settings: Record<string, unknown>;
  /** the unit every view of it shows */
  unit: "kV" | "A";
  /** stored (file) unit → shown unit: the probe's scale, or 1 */
  factor: number;
  /** the level per division on screen, written out by hand from the settings */
  perDiv: string;
  /** the chip of the settings as typed on the scope, with the physical value when a probe scale applies */
  settingsChip: RegExp;
  /** measurement row and its truth from the model */
  metric: { row: RegExp; truth: number; tolerance: number };
}

const FIRINGS: Firing[] = [
  { peakKv: 10.0, burnKv: 1.5, burnMs: 1.6 },
  { peakKv: 10.4, burnKv: 1.5, burnMs: 1.55 },
  { peakKv: 6.0, burnKv: 1.5, burnMs: 0.9 },
  { peakKv: 9.7, burnKv: 1.5, burnMs: 1.62 },
];

function captures(): Capture[] {
  const out: Capture[] = FIRINGS.map((f, k) => {
    const cylinder = k + 1;
    const kv = secondaryKv(f, cylinder);
    const exportedInKv = cylinder === 2;
    const base = {
      kind: "secondary-ignition",
      probe: "capacitive-secondary",
      kvPerVolt: KV_PER_V,
      timePerDivS: 5e-3,
      groundOffsetDiv: -2,
      cylinder,
      cylinders: 4,
    };
    return {
      file: exportedInKv ? "cyl2-export-kv.csv" : `cyl${cylinder}-pickup.csv`,
      label: `Cylinder ${cylinder}`,
      text: exportedInKv
        ? csv("Time (s),Channel A (kV)", kv, RATE_SEC, 4)
        : csv(
            "Time (s),Channel A (V)",
            kv.map((x) => x / KV_PER_V),
            RATE_SEC,
            5,
          ),
      // a trigger above the firing lines, so that the review has something to say about a level:
      // 1.5 V on the scope × 10 kV/V = 15 kV; the kV export's trigger is typed in kV (15 kV)
      settings: exportedInKv
        ? { ...base, voltsPerDiv: 5, triggerLevel: 15 }
        : { ...base, voltsPerDiv: 0.5, triggerLevel: 1.5 },
      unit: "kV",
      factor: exportedInKv ? 1 : KV_PER_V,
      // 0.5 V/div × 10 kV/V = 5 kV/div; the export's 5 kV/div as typed
      perDiv: "5 kV/div",
      settingsChip: exportedInKv ? /^5 kV\/div$/ : /^500 mV\/div on the scope \(5 kV\/div at the plug\)$/,
      metric: { row: /^Firing line/, truth: f.peakKv, tolerance: 0.05 },
    };
  });
  const amps = starterA(7);
  out.push({
    file: "starter-clamp.csv",
    label: "starter-clamp.csv",
    text: csv(
      "Time (s),Channel A (V)",
      amps.map((a) => (a * MV_PER_A) / 1000),
      RATE_CRANK,
      4,
    ),
    // 10 V/div on the scope ÷ 0.1 V/A = 100 A/div; a trigger of 90 V = 900 A, above the 550 A inrush
    settings: {
      kind: "relative-compression",
      probe: "current-clamp",
      mvPerAmp: MV_PER_A,
      voltsPerDiv: 10,
      groundOffsetDiv: -3,
      timePerDivS: 0.2,
      cylinders: 4,
      triggerLevel: 90,
    },
    unit: "A",
    factor: 1000 / MV_PER_A,
    perDiv: "100 A/div",
    settingsChip: /^10 V\/div on the scope \(100 A\/div clamp current\)$/,
    // a healthy stroke's rise above the cranking current: 80 A (model)
    metric: { row: /^Current rise per stroke/, truth: 80, tolerance: 0.1 },
  });
  return out;
}

// ---------------------------------------------------------------------------------------------

const shots = screenshotDir("units");
const errors: string[] = [];
let server: E2EServer;
let launched: LaunchedBrowser;
let expert: SignedInAgent;
let caseId = "";
const caps = captures();

beforeAll(async () => {
  server = await startE2EServer();
  const team = await createShopTeam(server, { technician: { name: "Robin Marsh" } });
  const e = await createExpert(server, { name: "Sam Okafor" });
  const tech = await signIn(server, team.technicians[0]);
  expert = await signIn(server, e);
  const created = await tech.post("/api/cases").send({
    vehicle: { year: 2019, make: "Veltra", model: "Sorrel", engine: "2.0 I4", mileage: 84210, mileageUnit: "km" },
    complaint: "Misfire on cylinder 3 under load, slow to crank when cold",
    codes: ["P0303"],
    system: "ignition",
    symptoms: ["misfire"],
  });
  expect(created.status).toBe(201);
  caseId = created.body.id;
  for (const c of caps) {
    const up = await request(server.url)
      .post(`/api/cases/${caseId}/traces`)
      .set("Cookie", tech.cookie)
      .field("settings", JSON.stringify(c.settings))
      .attach("file", Buffer.from(c.text), c.file);
    expect(up.status, JSON.stringify(up.body)).toBe(201);
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
});

afterAll(async () => {
  await launched?.close();
  await server?.close();
});

async function expertPage(): Promise<{ ctx: BrowserContext; page: Page }> {
  const ctx = await launched.browser.newContext({ viewport: { width: W, height: H } });
  watchErrors(ctx, errors, "expert");
  const host = new URL(server.url).hostname;
  await ctx.addCookies(
    expert.cookie.split("; ").map((c) => {
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
  const page = await ctx.newPage();
  await page.goto(`${server.url}/cases/${caseId}`);
  return { ctx, page };
}

/** A number with its unit at the end of a text ("−3.5 kV" → −3.5). */
function numberBefore(text: string, unit: string): number {
  const m = new RegExp(`(-?[\\d,.]+)\\s*${unit}\\b`).exec(text.replace(/\u2212/g, "-"));
  expect(m, `a number in ${unit} in "${text}"`).not.toBeNull();
  return Number(m![1].replace(/,/g, ""));
}

/** Every quantity in a text: "15 kV", "1.5 V", "500 mV/div", "80 A". */
function quantities(text: string): string[] {
  return [...text.matchAll(/-?\d[\d,.]*\s?(kV|mV|V|kA|mA|A)\b(\/div)?/g)].map((m) => m[0]);
}

describe.sequential(`one unit in every view, at ${W} px`, () => {
  test("the viewer: level axis, per-division text, cursors and a level mark in kV, kV and A", async () => {
    const { ctx, page } = await expertPage();
    try {
      const live = page.locator('section[aria-labelledby="live-title"]');
      await live.locator('[data-connection="live"]').waitFor({ timeout: 30_000 });
      for (const c of caps) {
        await live.getByRole("tab", { name: new RegExp(`^${c.label}`) }).click();
        const viewer = live.getByRole("region", { name: new RegExp(`^Trace ${c.label}`) });
        const plot = viewer.getByRole("img").first();
        await plot.waitFor();
        await viewer.getByText("Loading…").waitFor({ state: "detached" });
        // the level axis and the per-division text under the plot
        expect(await plot.getAttribute("data-level-unit")).toBe(c.unit);
        const labels = (await plot.getAttribute("data-level-labels"))?.split("|") ?? [];
        expect(labels.length, `${c.label}: level labels`).toBeGreaterThan(1);
        for (const l of labels) expect(l, `${c.label}: axis label`).toMatch(new RegExp(`^-?[\\d.,]+ ${c.unit}$`));
        expect(
          await viewer
            .getByText(/\/div · .*\/div/)
            .first()
            .innerText(),
        ).toMatch(new RegExp(`· ${c.perDiv.replace("/", "\\/")}$`));

        // cursors: Δ in the same unit ("ΔA" through the clamp)
        await viewer.getByRole("button", { name: "Cursors (c)" }).click();
        const dl = viewer.locator('dl[aria-label="Cursor readout"]');
        await dl.waitFor();
        const dlText = await dl.innerText();
        expect(dlText).toContain(c.unit === "A" ? "ΔA" : "ΔV");
        for (const q of quantities(dlText)) expect(q, `${c.label}: cursor readout`).toMatch(new RegExp(` ${c.unit}$`));
        await viewer.getByRole("button", { name: "Cursors (c)" }).click();

        // a level mark: its prompt, its list entry, and what is stored (the file's unit)
        await viewer.getByRole("button", { name: "Level (l)" }).click();
        const box = (await plot.boundingBox())!;
        await page.mouse.click(box.x + box.width * 0.5, box.y + box.height * 0.35);
        const input = viewer.getByLabel(/^Label for the new level at /);
        await input.waitFor();
        const prompt = (await viewer.locator('label[for="mark-label"]').innerText()).trim();
        expect(prompt).toMatch(new RegExp(`at -?[\\d.,]+ ${c.unit}$`));
        const label = `check ${c.file}`;
        await input.fill(label);
        await input.press("Enter");
        const item = viewer.getByRole("button", { name: new RegExp(`Level · ${label.replace(".", "\\.")}`) });
        await item.waitFor({ timeout: 10_000 });
        const itemText = await item.innerText();
        expect(quantities(itemText).length).toBe(1);
        const shown = numberBefore(itemText, c.unit);
        await expect
          .poll(async () =>
            (await expert.get(`/api/cases/${caseId}/annotations`)).body.annotations.some(
              (a: { label: string }) => a.label === label,
            ),
          )
          .toBe(true);
        const stored = (await expert.get(`/api/cases/${caseId}/annotations`)).body.annotations.find(
          (a: { label: string }) => a.label === label,
        );
        // stored in the file's unit: × 10 kV/V (pickup), × 1 (kV export), ÷ 0.1 V/A (clamp) gives what is shown, to its 3 figures
        expect(
          Math.abs(stored.level * c.factor - shown),
          `${c.label}: stored ${stored.level} × ${c.factor} against ${shown} shown`,
        ).toBeLessThanOrEqual(Math.abs(shown) * 0.006 + 1e-9);
        // a mark tool puts itself down after one mark (issue 13): it is not armed for the next trace
        expect(await viewer.getByRole("button", { name: "Level (l)" }).getAttribute("aria-pressed")).toBe("false");
        await viewer.screenshot({ path: path.join(shots, `viewer-${c.file.replace(".csv", "")}.png`) });
      }
    } finally {
      await ctx.close();
    }
    expect(errors).toEqual([]);
  });

  test("the trace cards: settings, the units sentence, the measurement table and the capture review in the same unit", async () => {
    const { ctx, page } = await expertPage();
    try {
      for (const c of caps) {
        const card = page.getByRole("article", { name: new RegExp(`^${c.label}(?!\\d)`) });
        await card.waitFor();
        await card.scrollIntoViewIfNeeded();
        // the settings as typed on the scope, with the physical value beside them
        const chips = await card.getByRole("list", { name: "Capture settings" }).getByRole("listitem").allInnerTexts();
        expect(
          chips.some((x) => c.settingsChip.test(x)),
          `${c.label}: ${chips.join(" | ")}`,
        ).toBe(true);
        const cardText = await card.innerText();
        if (c.file === "cyl2-export-kv.csv")
          expect(cardText).toMatch(/states kV, so the pickup scale \(10 kV\/V\) is not applied again/);

        // the measurement table, against the model's truth
        const table = card.getByRole("region", { name: `Measurements of ${c.label}` });
        const cell = table.getByRole("row", { name: c.metric.row }).getByRole("cell").first();
        const text = await cell.innerText();
        expect(text, `${c.label}: ${text}`).toMatch(new RegExp(` ${c.unit}$`));
        const value = numberBefore(text, c.unit);
        expect(
          Math.abs(value - c.metric.truth) / c.metric.truth,
          `${c.label}: ${value} ${c.unit} against ${c.metric.truth} ${c.unit}`,
        ).toBeLessThan(c.metric.tolerance);
        for (const q of quantities(await table.innerText())) {
          if (/[VA]$/.test(q)) expect(q, `${c.label}: measurement ${q}`).toMatch(new RegExp(` ${c.unit}$`));
        }

        // the capture review: the trigger above the signal is named in the physical unit; a setting
        // in volts appears only as typed on the scope, beside its physical value
        const review = await card.getByRole("region", { name: `Findings for ${c.label}` }).innerText();
        const levels = quantities(review);
        expect(
          levels.some((q) => q.endsWith(` ${c.unit}`)),
          `${c.label}: review "${review}"`,
        ).toBe(true);
        for (const sentence of review.split(/(?<=[.:;])\s+/)) {
          for (const q of quantities(sentence)) {
            if (!q.endsWith(` ${c.unit}`) && !q.endsWith(`${c.unit}/div`))
              expect(sentence, `${c.label}: "${q}" in "${sentence}"`).toMatch(/on the scope/);
          }
        }
      }
      await shot(page, shots, "trace-cards");
    } finally {
      await ctx.close();
    }
    expect(errors).toEqual([]);
  });

  test("the comparison names the odd cylinder in plain words; the statistic is one click away", async () => {
    const { ctx, page } = await expertPage();
    try {
      const cmp = page.getByRole("region", { name: "Cylinder to cylinder" });
      await cmp.waitFor();
      const odd = cmp.getByRole("list", { name: "Odd ones out" }).getByRole("listitem");
      await expect.poll(() => odd.count()).toBe(1);
      const said = await odd.first().innerText();
      // the model: 6.0 kV against 10.0–10.4 kV (40 % below), 0.9 ms against 1.55–1.62 ms (44 % shorter)
      expect(said).toMatch(/^[●\s]*Cylinder 3\b/);
      expect(said).toMatch(/firing line[^,]*below/i);
      expect(said).toMatch(/burn time[^,]*shorter/i);
      expect(said).not.toMatch(/z-score|MAD|\bM =/);
      expect(await cmp.innerText()).not.toMatch(/z-score/);
      await cmp.getByRole("button", { name: /how this was decided/i }).click();
      expect(await cmp.innerText()).toMatch(/modified z-score/);
      await cmp.scrollIntoViewIfNeeded();
      await shot(page, shots, "comparison");
    } finally {
      await ctx.close();
    }
    expect(errors).toEqual([]);
  });
});
