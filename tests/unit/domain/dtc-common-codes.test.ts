/**
 * Descriptions of common codes the desk sees often and had none (shared/domain/dtc-table.ts).
 * Meanings from public generic SAE J2012 code lists (from memory; the lists agree on the meaning,
 * their wording differs and ours is our own): P0011 intake camshaft timing over-advanced or system
 * performance, bank 1; P0016 crankshaft/camshaft position correlation, bank 1 sensor A; P0087 fuel
 * rail/system pressure too low; P0562 system voltage low. Neighbours from the same lists.
 */
import { describe, expect, it } from "vitest";
import { describeDtc, parseDtc } from "../../../shared/domain/dtc";

const description = (code: string) => {
  const p = parseDtc(code);
  if (!p.ok) throw new Error(`${code} did not parse`);
  return p.description ?? "";
};

describe("common codes have a description", () => {
  it("P0011: intake camshaft timing ahead of the command, bank 1", () => {
    expect(description("P0011")).toMatch(/intake camshaft/i);
    expect(description("P0011")).toMatch(/advanced/i);
    expect(description("P0011")).toMatch(/bank 1/i);
  });
  it("P0016: crankshaft and camshaft positions disagree, bank 1", () => {
    expect(description("P0016")).toMatch(/crankshaft/i);
    expect(description("P0016")).toMatch(/camshaft/i);
    expect(description("P0016")).toMatch(/bank 1/i);
  });
  it("P0087: fuel rail or system pressure too low (P0088 too high)", () => {
    expect(description("P0087")).toMatch(/fuel.*pressure.*low/i);
    expect(description("P0088")).toMatch(/fuel.*pressure.*high/i);
  });
  it("P0562: system voltage low (P0563 high)", () => {
    expect(description("P0562")).toMatch(/voltage.*low/i);
    expect(description("P0563")).toMatch(/voltage.*high/i);
  });
  it("each is shown with its code", () => {
    for (const code of ["P0011", "P0016", "P0087", "P0562"])
      expect(describeDtc(code)).toMatch(new RegExp(`^${code} — \\w`));
  });
});
