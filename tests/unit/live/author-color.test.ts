import { describe, expect, it } from "vitest";
import { authorColor, DESK_COLORS, SHOP_COLORS } from "../../../shared/realtime";

/** WCAG 2.1 relative luminance and contrast ratio (W3C, "Web Content Accessibility Guidelines 2.1", definitions). */
function luminance(hex: string): number {
  const ch = [1, 3, 5]
    .map((i) => parseInt(hex.slice(i, i + 2), 16) / 255)
    .map((c) => (c <= 0.03928 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4));
  return 0.2126 * ch[0] + 0.7152 * ch[1] + 0.0722 * ch[2];
}
const contrastOnWhite = (hex: string) => (1 + 0.05) / (luminance(hex) + 0.05);

describe("author colours", () => {
  it("read against the white plot area at the WCAG AA ratio for text (4.5:1)", () => {
    // WCAG 2.1 success criterion 1.4.3: at least 4.5:1; black on white is 21:1, the maximum
    expect(contrastOnWhite("#000000")).toBeCloseTo(21, 5);
    for (const c of [...DESK_COLORS, ...SHOP_COLORS]) expect(contrastOnWhite(c)).toBeGreaterThanOrEqual(4.5);
  });

  it("are the user's own when set, else derived from the id, the desk and the shop apart", () => {
    expect(authorColor({ id: "u1", role: "expert", color: "#123456" })).toBe("#123456");
    expect(authorColor({ id: "u1", role: "expert", color: "not a colour" })).toMatch(/^#[0-9a-f]{6}$/);
    const ids = Array.from({ length: 200 }, (_, i) => `user-${i}`);
    for (const id of ids) {
      expect(authorColor({ id, role: "expert" })).toBe(authorColor({ id, role: "expert" })); // deterministic
      expect(DESK_COLORS as readonly string[]).toContain(authorColor({ id, role: "admin" }));
      expect(SHOP_COLORS as readonly string[]).toContain(authorColor({ id, role: "technician" }));
    }
    // every colour of each list is used by some id (the hash spreads)
    expect(new Set(ids.map((id) => authorColor({ id, role: "expert" }))).size).toBe(DESK_COLORS.length);
    expect(new Set(ids.map((id) => authorColor({ id, role: "owner" }))).size).toBe(SHOP_COLORS.length);
  });
});
