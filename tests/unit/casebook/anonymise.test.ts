/**
 * Scrubbing free text for the casebook (shared/domain/anonymise.ts).
 *
 * Outside references:
 * - E-mail addresses: RFC 5322 §3.4.1 addr-spec (dot-atom local part); the domains used are
 *   reserved for examples and testing by RFC 2606 (example.com, example.org, .test).
 * - Telephone numbers: written forms per ITU-T E.123 (international "+CC …", national with a
 *   trunk "0", parentheses around the area code), at most 15 digits per ITU-T E.164. The numbers
 *   are reserved for fiction: NANP 555-0100…0199 (North American Numbering Plan Administrator),
 *   Ofcom's drama ranges 020 7946 0000–0999, 0113 496 0000–0999 and 07700 900000–900999.
 * - VIN: 1M8GDM9AXKP042788 is the worked check-digit example of 49 CFR 565.15 (trade reference);
 *   positions 1–8 and 10–11 describe the model, 12–17 are the serial (§565.15(b)–(d)).
 */
import { describe, expect, it } from "vitest";
import {
  maskVin,
  REDACTED,
  scrubEmails,
  scrubPhones,
  scrubText,
  stripControls,
} from "../../../shared/domain/anonymise";
import { vinModelPart } from "../../../shared/domain/vin";

describe("e-mail addresses", () => {
  it("removes addr-spec forms, keeps everything around them", () => {
    for (const a of [
      "dana@example.com",
      "dana.whitlock@example.com",
      "o'brien+shop@mail.example.org",
      "x_y-z@sub.domain.test",
      "UPPER@EXAMPLE.COM",
    ]) {
      expect(scrubEmails(`mail ${a}, thanks`)).toBe(`mail ${REDACTED.email}, thanks`);
    }
  });
  it("leaves text without an address alone (an @ in a measurement is not an address)", () => {
    expect(scrubEmails("burn 1.5 ms @ 2500 rpm")).toBe("burn 1.5 ms @ 2500 rpm");
  });
});

describe("phone numbers", () => {
  const planted = [
    "+44 20 7946 0958",
    "+44 (0)20 7946 0123",
    "020 7946 0958",
    "0113 496 0999",
    "07700 900123",
    "07700900456",
    "+1 202-555-0143",
    "+1 (202) 555-0178",
    "(202) 555-0199",
    "202-555-0101",
    "202.555.0112",
    "202 555 0123",
    "1-800-555-0199",
    "0044 20 7946 0777",
  ];
  for (const p of planted) {
    it(`removes ${p}`, () => {
      const out = scrubPhones(`ring ${p} today`);
      expect(out).toBe(`ring ${REDACTED.phone} today`);
      expect(out).not.toMatch(/\d{3}/);
    });
  }
  it("removes a local number after a word that says it is one", () => {
    expect(scrubPhones("call 555-0143 after six")).toBe(`call ${REDACTED.phone} after six`);
    expect(scrubPhones("tel. 555 0187")).toBe(`tel. ${REDACTED.phone}`);
  });
  it("keeps the trade's numbers: measurements, codes, rpm ranges, dates, part counts", () => {
    const text =
      "Burn 0.6 ms against 1.5 ms at 750 rpm; firing line 35 kV; P0303 and P0351; sweep 800-3000 rpm; battery 12.6 V; 2500 rpm for 30 s; dwell 3.2 ms; 2019-05-14; 84,000 km; 4 coils; 1/10 s per division; 200-1000 Hz.";
    expect(scrubPhones(text)).toBe(text);
    expect(scrubText(text)).toBe(text);
  });
});

describe("names", () => {
  const ctx = {
    names: ["Dana Whitlock", "Oskar Brandtner", "Al Long"],
    organisations: ["Quarrymoor Ignition Works"],
    emails: ["d.whitlock@example.com"],
  };
  it("removes the people on the case (full names and their parts) and the shop", () => {
    expect(
      scrubText(
        "Dana Whitlock and Whitlock's apprentice saw it; OSKAR confirmed. Quarrymoor Ignition Works, Quarrymoor crew.",
        ctx,
      ),
    ).toBe(
      `${REDACTED.name} and ${REDACTED.name} apprentice saw it; ${REDACTED.name} confirmed. ${REDACTED.shop} crew.`, // neighbouring placeholders merge
    );
  });
  it("removes a name part that is also an ordinary word only where it is capitalised inside a sentence", () => {
    expect(scrubText("Long crank at first, then asked Long about it. Long cranking again; a long crank.", ctx)).toBe(
      `Long crank at first, then asked ${REDACTED.name} about it. Long cranking again; a long crank.`,
    );
    // the shop's generic words stay: "ignition" and "works" are not the shop
    expect(scrubText("The ignition works now.", ctx)).toBe("The ignition works now.");
  });
  it("removes the local part of a known address written alone, honorific + surname and listed given names", () => {
    expect(scrubText("ask whitlock or Mrs Feldhaus; Sarah and John saw it", ctx)).toBe(
      `ask ${REDACTED.name} or ${REDACTED.name}; ${REDACTED.name} and ${REDACTED.name} saw it`,
    );
  });
  it("does not treat the trade's capitalised words as names", () => {
    const text = "Mark the spark line. Check coil 4. Max burn 2 ms. Jack the car up. Will recheck.";
    expect(scrubText(text)).toBe(text);
  });
});

describe("VIN", () => {
  const vin = "1M8GDM9AXKP042788";
  it("cuts a VIN to its model part, masking the check digit and the serial", () => {
    const m = maskVin(vin)!;
    expect(m).toBe("1M8GDM9A*KP******");
    expect(m.replace(/\*/g, "")).toBe(vinModelPart(vin)); // positions 1–8, 10, 11
    expect(maskVin("not a vin")).toBeNull();
  });
  it("masks a VIN in the text and removes the case's serial wherever it appears", () => {
    const out = scrubText(`VIN ${vin.toLowerCase()} checked; serial 042788 stamped on the frame; KP042788`, { vin });
    expect(out).toBe(
      `VIN 1M8GDM9A*KP******; serial ${REDACTED.serial} stamped on the frame; KP${REDACTED.serial}`.replace(
        "; serial",
        " checked; serial",
      ),
    );
    expect(out).not.toContain("042788");
  });
});

describe("control characters", () => {
  it("strips them (the search snippet markers U+0002/U+0003 among them), keeps newlines and tabs", () => {
    expect(stripControls("a\u0002b\u0003c\nd\te\u0000\u200b")).toBe("abc\nd\te");
  });
});
