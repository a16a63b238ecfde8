/**
 * The printed report's time labels stay inside the figure (src/features/report/lib/figure.ts).
 * A label's extent follows SVG's text-anchor (W3C SVG 1.1 §10.9.1: "start" begins at x, "middle"
 * is centred on x, "end" ends at x); its width is estimated at 0.6 em a character for 11 px type
 * (a typesetting rule of thumb for sans-serif digits, from memory).
 */
import { describe, expect, it } from "vitest";
import { figureGeometry } from "../../../src/features/report/lib/figure";

const FONT_PX = 11;
const width = (label: string) => label.length * 0.6 * FONT_PX;
const extent = (t: { x: number; label: string; anchor: "start" | "middle" | "end" }) => {
  const w = width(t.label);
  return t.anchor === "start" ? [t.x, t.x + w] : t.anchor === "end" ? [t.x - w, t.x] : [t.x - w / 2, t.x + w / 2];
};
const trace = { t: [0, 0.0025, 0.005], series: [{ name: "A", min: [0, 1, 0], max: [2, 3, 2] }] };

describe("time labels of a printed figure", () => {
  for (const px of [360, 720]) {
    it(`all fall inside a figure ${px} px wide, the last one included`, () => {
      const box = { width: px, height: 240, left: 52, bottom: 28, top: 10, right: 12, timeTicks: Math.floor(px / 110) };
      const g = figureGeometry(trace, [], 0, 0.005, box);
      expect(g.timeTicks.length).toBeGreaterThanOrEqual(3);
      // on the wide figure the window's end (5 ms) is labelled at the plot's right edge: the label
      // that used to be cut in half by the edge of the drawing
      if (px === 720) expect(g.timeTicks.at(-1)).toMatchObject({ label: "5 ms", x: px - 12, anchor: "end" });
      for (const t of g.timeTicks) {
        const [a, b] = extent(t);
        expect(a, `${t.label} starts inside`).toBeGreaterThanOrEqual(0);
        expect(b, `${t.label} ends inside`).toBeLessThanOrEqual(px);
      }
    });
  }
  it("labels do not overlap on a phone-wide figure", () => {
    const g = figureGeometry(trace, [], 0, 0.005, {
      width: 360,
      height: 240,
      left: 52,
      bottom: 28,
      top: 10,
      right: 12,
      timeTicks: 3,
    });
    const spans = g.timeTicks.map(extent);
    for (let i = 1; i < spans.length; i++) expect(spans[i][0], `label ${i}`).toBeGreaterThan(spans[i - 1][1]);
  });
});
