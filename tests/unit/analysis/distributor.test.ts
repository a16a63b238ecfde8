/**
 * A pickup on a distributor's coil wire sees every cylinder's firing: N firings per engine cycle
 * (720° on a four-stroke engine), so rpm = 120/(period × N) (trade reference: each cylinder fires once
 * per two revolutions). Model: demo/generators/ignition.ts with `firingsPerCycle` = N, the firings
 * 120/(rpm·N) apart; truth rpm from the parameters. With the setting absent the same capture reads as
 * one cylinder's coil: 120/period, N times the engine's speed.
 */
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import { captureSettingsSchema } from "../../../shared/schemas/capture-settings";
import type { SecondaryResult } from "../../../shared/analysis/types";
import { renderCsv } from "../../../demo/generators/csv";
import { generateIgnition } from "../../../demo/generators/ignition";

describe("a pickup that sees every cylinder's firing (a distributor's coil wire)", () => {
  it.each([
    [4, 900],
    [6, 750],
    [8, 1200],
  ])("%i cylinders at %i rpm: rpm = 120/(period × cylinders)", (N, rpm) => {
    const g = generateIgnition({ seed: 31, events: N + 1, rpm, firingsPerCycle: N, sampleRateHz: 1e6, jitter: 0.03 });
    const r = analyzeTrace(g.trace, { everyCylinder: true, cylinders: N }) as SecondaryResult;
    expect(r.summary.eventCount).toBe(N + 1);
    expect(r.summary.firingsPerCycle).toBe(N);
    expect(Math.abs(r.summary.rpm! - g.truth.rpm!) / g.truth.rpm!).toBeLessThan(0.01);
    expect(Math.abs(r.summary.rpm! - rpm) / rpm).toBeLessThan(0.02);
    expect(r.findings.map((f) => f.code)).not.toContain("cylinders-assumed");
    // without the setting: one cylinder's coil, 120/period — N times too fast
    const coil = analyzeTrace(g.trace, { cylinders: N }) as SecondaryResult;
    // (results are rounded to 6 significant digits)
    expect(Math.abs(coil.summary.rpm! / r.summary.rpm! - N)).toBeLessThan(1e-4);
  });

  it("without the cylinder count, 4 is assumed and said", () => {
    const g = generateIgnition({ seed: 32, events: 5, rpm: 900, firingsPerCycle: 4 });
    const r = analyzeTrace(g.trace, { everyCylinder: true }) as SecondaryResult;
    expect(Math.abs(r.summary.rpm! - 900) / 900).toBeLessThan(0.02);
    const f = r.findings.find((x) => x.code === "cylinders-assumed");
    expect(f?.severity).toBe("info");
    expect(f?.message).toMatch(/4 was assumed/);
  });

  it("the capture settings carry it (off by default); the command line takes --every-cylinder", () => {
    const base = { voltsPerDiv: 0.5, timePerDivS: 0.005 };
    expect(captureSettingsSchema.parse(base).everyCylinder).toBe(false);
    expect(captureSettingsSchema.parse({ ...base, everyCylinder: true, cylinders: 6 }).everyCylinder).toBe(true);
    const g = generateIgnition({ seed: 33, events: 5, rpm: 900, firingsPerCycle: 4, fileUnit: "V", kvPerVolt: 10 });
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-dist-"));
    try {
      const f = path.join(dir, "coil-wire.csv");
      fs.writeFileSync(f, renderCsv(g.trace));
      const root = path.resolve(__dirname, "../../..");
      const run = (args: string[]) =>
        spawnSync(process.execPath, ["--import", "tsx", path.join(root, "scripts/analyze.ts"), f, ...args], {
          cwd: root,
          encoding: "utf8",
        });
      const ok = run(["--kv-per-volt", "10", "--cylinders", "4", "--every-cylinder", "--json"]);
      expect(ok.status).toBe(0);
      expect(Math.abs(JSON.parse(ok.stdout).summary.rpm - 900) / 900).toBeLessThan(0.02);
      const both = run(["--every-cylinder", "--waste-spark", "--json"]);
      expect(both.status).toBe(2);
      expect(both.stderr).toMatch(/exclude each other/);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
