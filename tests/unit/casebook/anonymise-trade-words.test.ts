/**
 * The scrubber removes names, not the trade's words (shared/domain/anonymise.ts).
 *
 * The case that went wrong: a shop member's address was tech@…, and the word "tech" in the
 * expert's diagnosis came out as "[name]". The words below are the ordinary vocabulary of ignition
 * and scope work (common practice, no source) and the usual role mailboxes of a shop; each is tried
 * as an address's whole local part, as a part of one, and inside a diagnosis. The addresses use
 * RFC 2606's reserved .test domain.
 */
import { describe, expect, it } from "vitest";
import { REDACTED, scrubText } from "../../../shared/domain/anonymise";

const TRADE = [
  "tech",
  "coil",
  "plug",
  "spark",
  "misfire",
  "injector",
  "sensor",
  "wire",
  "boot",
  "ground",
  "scope",
  "dwell",
  "burn",
  "firing",
  "primary",
  "secondary",
  "trigger",
  "probe",
  "lead",
  "harness",
  "connector",
  "module",
  "relay",
  "fuse",
  "battery",
  "starter",
  "crank",
  "timing",
  "compression",
  "vacuum",
  "pressure",
  "signal",
  "waveform",
  "capture",
  "cylinder",
  "carbon",
  "tracking",
  "service",
  "owner",
  "expert",
  "shop",
  "desk",
];

describe("trade words are never taken for names", () => {
  for (const w of TRADE) {
    it(`keeps "${w}" when a member's address is ${w}@… or ${w}.desk@…`, () => {
      const text = `The ${w} was checked twice; ${w[0].toUpperCase()}${w.slice(1)} readings looked normal. ${w}s too.`;
      const ctx = { emails: [`${w}@cinder.test`, `${w}.desk@cinder.test`, `${w}2@cinder.test`] };
      expect(scrubText(text, ctx)).toBe(text);
    });
  }

  it("a diagnosis written by a tech keeps its words while the people on the case go", () => {
    const ctx = {
      names: ["Dana Whitlock", "Ravi Castellan", "Mira Okonkwo-Hale"],
      emails: ["tech@burnline.test", "owner@burnline.test", "expert@burnline.test", "ravi.castellan@cinder.test"],
      organisations: ["Cinderwick Auto Works"],
    };
    const text =
      "The tech swapped coil 2 and the misfire moved; the scope showed a short burn and a tall firing line. " +
      "Dana Whitlock checked the boot for carbon tracking; Ravi approved the new coil. Ask the owner or the expert.";
    expect(scrubText(text, ctx)).toBe(
      "The tech swapped coil 2 and the misfire moved; the scope showed a short burn and a tall firing line. " +
        `${REDACTED.name} checked the boot for carbon tracking; ${REDACTED.name} approved the new coil. ` +
        "Ask the owner or the expert.",
    );
  });

  it("still removes an address's local part that is a name", () => {
    const ctx = { emails: ["whitlock@cinder.test", "d.okafor@cinder.test"] };
    expect(scrubText("whitlock saw it; so did d.okafor and Okafor", ctx)).toBe(
      `${REDACTED.name} saw it; so did ${REDACTED.name} and ${REDACTED.name}`,
    );
  });

  it("a member named after a trade word is removed only where the word is capitalised inside a sentence", () => {
    const ctx = { names: ["Jo Spark"] };
    expect(scrubText("Ask Spark about it. Spark plug gap 0.8 mm; a weak spark.", ctx)).toBe(
      `Ask ${REDACTED.name} about it. Spark plug gap 0.8 mm; a weak spark.`,
    );
  });
});
