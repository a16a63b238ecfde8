/**
 * Similar cases by waveform pattern. The traces are generated with known truth
 * (demo/generators/secondary.ts: the burn time of each coil is the generator's parameter) and
 * measured by shared/analysis exactly as at upload; the pattern must name the odd coil and its
 * burn time, and the ranking must put a planted look-alike first among 2,000 other entries
 * (random patterns from a seeded PRNG, plus decoys: an odd coil burning long instead of short,
 * and even coils).
 */
import { describe, expect, it } from "vitest";
import { analyzeTrace } from "../../../shared/analysis/analyze";
import { generateSecondary } from "../../../demo/generators/secondary";
import {
  casePattern,
  featureDistance,
  FEATURE_DIMS,
  patternVector,
  SimilarIndex,
  similarIndex,
  similarityReasons,
  type CasePattern,
  type PatternTrace,
} from "../../../server/services/similar";
import { syntheticEntries, syntheticPattern } from "../../factories/casebook";
import { createRng } from "../../helpers/prng";
import { openFile } from "../../../server/db/client";
import { insertCasebookEntries } from "../../../server/services/casebook";

/** Four coil-on-plug captures, one per coil, measured as at upload. */
function coils(burns: number[], opts: { rpm?: number; seed?: number } = {}): PatternTrace[] {
  return burns.map((burnTimeMs, i) => {
    const g = generateSecondary({
      seed: (opts.seed ?? 1) + i,
      sampleRateHz: 200_000,
      events: 3,
      burnTimeMs,
      rpm: opts.rpm ?? 750,
    });
    const settings = { ...g.settings, coil: i + 1 };
    return { settings, analysis: analyzeTrace(g.trace, settings as never) as unknown as Record<string, unknown> };
  });
}

describe("the pattern of a case", () => {
  it("names the odd coil and its burn time against the others (generator truth 0.6 ms against 1.5 ms)", () => {
    const p = casePattern(coils([1.5, 1.5, 1.5, 0.6]));
    const burn = p.odd.find((o) => o.metric === "burnTimeMs")!;
    expect(burn.label).toBe("coil 4");
    expect(burn.value).toBeCloseTo(0.6, 1);
    expect(burn.others).toBeCloseTo(1.5, 1);
    expect(burn.ratio).toBeCloseTo(0.4, 1);
    expect(p.burnTimeMs).toBeCloseTo(1.5, 1);
    // rpm from the spacing of firings: 750 rpm, one firing per 720° per coil (generator truth)
    expect(p.rpm).toBeCloseTo(750, -1);
    expect(p.kinds).toEqual(["secondary-ignition"]);
    expect(p.compared).toBe(4);
  });

  it("without analysed traces has no waveform features", () => {
    const p = casePattern([{ settings: {}, analysis: null }]);
    expect(p.odd).toEqual([]);
    expect(Number.isNaN(patternVector(p)[0])).toBe(true);
  });
});

describe("distance", () => {
  it("is zero for the same pattern, grows with the difference, and charges a feature known on one side only", () => {
    const rng = createRng(5);
    const a = patternVector(syntheticPattern(rng, { oddCoil: 2, burnMs: 1.5, oddBurnMs: 0.6 }));
    expect(featureDistance(a, a)).toBe(0);
    const b = Float32Array.from(a);
    b[0] += 0.5;
    const c = Float32Array.from(a);
    c[0] += 1.0;
    expect(featureDistance(a, c)).toBeCloseTo(4 * featureDistance(a, b), 5); // squared: twice the gap, four times the cost
    const d = Float32Array.from(a);
    d[0] = NaN;
    expect(featureDistance(a, d)).toBeGreaterThan(0);
    expect(a.length).toBe(FEATURE_DIMS);
  });
});

describe("ranking", () => {
  it("puts the planted look-alike first among 2,000 entries, with the reason in words", () => {
    const query = casePattern(coils([1.5, 1.5, 1.5, 0.6], { seed: 10 }));
    const lookAlike = casePattern(coils([1.45, 0.65, 1.45, 1.45, 1.45, 1.45], { seed: 30, rpm: 800 }));
    const longBurn = casePattern(coils([1.5, 1.5, 2.4, 1.5], { seed: 50 }));
    const even = casePattern(coils([1.5, 1.5, 1.5, 1.5], { seed: 70 }));
    const ix = new SimilarIndex();
    const rng = createRng(99);
    for (let i = 0; i < 2000; i++) ix.put(`random-${i}`, patternVector(syntheticPattern(rng)), true);
    ix.put("long-burn", patternVector(longBurn), true);
    ix.put("even", patternVector(even), true);
    ix.put("look-alike", patternVector(lookAlike), true);
    const top = ix.nearest(patternVector(query), 5);
    expect(top[0].entryId).toBe("look-alike");
    expect(top.map((m) => m.entryId)).not.toContain("long-burn");
    expect(top[0].similarity).toBeGreaterThan(top[1].similarity);
    const reasons = similarityReasons(query, lookAlike);
    expect(reasons[0]).toMatch(/^coil 2 burn 0\.6\d? ms against 1\.4\d? ms on the others, like this case$/);
    // a long burn is not "like" a short one
    expect(similarityReasons(query, longBurn).join(" ")).not.toMatch(/burn .* like this case/);
    // hidden entries drop out; a replaced vector counts
    ix.put("look-alike", null, false);
    expect(ix.nearest(patternVector(query), 1)[0].entryId).not.toBe("look-alike");
    ix.put("look-alike", patternVector(lookAlike), true);
    expect(ix.nearest(patternVector(query), 1)[0].entryId).toBe("look-alike");
  });

  it("loads the vectors from the casebook once and follows publishing and hiding", async () => {
    const db = openFile(":memory:");
    await insertCasebookEntries(db, syntheticEntries(200, 3), { scrub: false });
    const p: CasePattern = syntheticPattern(createRng(1), {
      oddCoil: 3,
      burnMs: 1.6,
      oddBurnMs: 0.3,
      rpm: 1234,
      cylinders: 4,
    });
    const [id] = await insertCasebookEntries(db, [{ ...syntheticEntries(1, 4)[0], pattern: p }]);
    const v = patternVector(p);
    expect((await similarIndex(db)).nearest(v, 1)[0]).toMatchObject({ entryId: id, distance: 0, similarity: 1 });
    const sqlite = db.sqlite!;
    const rev = (sqlite.prepare("SELECT max(rev) FROM casebook_entry").pluck().get() as number) + 1;
    sqlite.prepare("UPDATE casebook_entry SET hidden = 1, rev = ? WHERE id = ?").run(rev, id);
    expect((await similarIndex(db)).nearest(v, 3).map((m) => m.entryId)).not.toContain(id);
  });
});
