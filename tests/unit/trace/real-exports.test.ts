/**
 * The importer on exports written by real instruments (bench, handheld and PC scopes, a data
 * logger), shared in public repositories. The files and their truth live outside the project, in
 * `shared/real-exports/` beside the project's checkout (`manifest.json`: source repository, path,
 * commit and licence of each file, and the truth read from each file independently — samples,
 * channels, sample interval, channel 1's unit, first, last, min and max). They are read from there,
 * never copied into the project. Every expected value below comes from that manifest.
 */
import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { parseTraceText } from "../../../shared/trace/parse";
import { normaliseUnit } from "../../../shared/trace/units";

interface ManifestEntry {
  file: string;
  source: { repository: string; license: string };
  truth: {
    samples: number;
    channels: number;
    sampleIntervalS: number;
    sampleRateHz: number;
    ch1First: number;
    ch1Last: number;
    ch1Unit: string;
    ch1Min: number;
    ch1Max: number;
    channelsAlsoAccepted?: number[];
  };
  cliSampleRateHz: number | null;
}

/** `shared/real-exports/` in the first folder above the project that has one (../shared from /work/main). */
function findExports(): string | null {
  let dir = path.resolve(__dirname, "../../..");
  for (let i = 0; i < 5; i++) {
    dir = path.dirname(dir);
    const candidate = path.join(dir, "shared", "real-exports");
    if (fs.existsSync(path.join(candidate, "manifest.json"))) return candidate;
  }
  return null;
}

const dir = process.env.BURNLINE_REAL_EXPORTS ?? findExports();
const manifest: ManifestEntry[] = dir
  ? (JSON.parse(fs.readFileSync(path.join(dir, "manifest.json"), "utf8")).files as ManifestEntry[])
  : [];

/** The unit the manifest names for channel 1, as the reader reports it (normalised; raw codes as "counts"). */
function expectedUnit(truth: string): string | null {
  if (/raw ADC counts/i.test(truth)) return "counts";
  return normaliseUnit(truth);
}

/** A unit word used as a channel name (what a units row read as names gives: "Volt", "Volt (2)"). */
const UNIT_AS_NAME = /^(volt|volts|v|mv|kv|a|amp|amps|second|seconds|s|ms|sequence)( \(\d+\))?$/i;

describe.skipIf(!dir)("real instrument exports (truth from shared/real-exports/manifest.json)", () => {
  it("the manifest lists the exports", () => {
    // manifest.json lists 13 files
    expect(manifest.length).toBe(13);
  });

  describe.each(manifest.map((m) => [m.file, m] as const))("%s", (_file, m) => {
    const text = dir ? fs.readFileSync(path.join(dir, m.file), "utf8") : "";
    const t = parseTraceText(text, m.cliSampleRateHz ? { sampleRateHz: m.cliSampleRateHz } : {});
    const ch1 = t.channels[0];

    it("reads every sample, at the file's sample rate", () => {
      expect(t.samples).toBe(m.truth.samples);
      // rate and interval from the manifest, to a part in a million (the manifest's own arithmetic
      // on printed times differs from ours in the last digits)
      expect(Math.abs(t.sampleRateHz / m.truth.sampleRateHz - 1)).toBeLessThan(1e-6);
      expect(Math.abs(1 / t.sampleRateHz / m.truth.sampleIntervalS - 1)).toBeLessThan(1e-6);
    });

    it("finds the channels, named from the header and not after their unit", () => {
      expect([m.truth.channels, ...(m.truth.channelsAlsoAccepted ?? [])]).toContain(t.channels.length);
      for (const c of t.channels) expect(c.name, c.name).not.toMatch(UNIT_AS_NAME);
      expect(ch1.unit).toBe(expectedUnit(m.truth.ch1Unit));
    });

    it("keeps channel 1's first, last, lowest and highest value (single precision)", () => {
      // values are stored as float32: the manifest's decimals rounded to single precision
      expect(ch1.values[0]).toBe(Math.fround(m.truth.ch1First));
      expect(ch1.values[t.samples - 1]).toBe(Math.fround(m.truth.ch1Last));
      expect(ch1.min).toBe(Math.fround(m.truth.ch1Min));
      expect(ch1.max).toBe(Math.fround(m.truth.ch1Max));
    });
  });
});
