import { describe, expect, it } from "vitest";
import {
  decodeDtcBytes,
  decodeDtcList,
  describeDtc,
  encodeDtcBytes,
  isGenericDtc,
  misfireCylinderOf,
  normalizeDtc,
  parseDtc,
  validateDtc,
  type ParsedDtc,
} from "../../../shared/domain/dtc";
import { dtcDescriptions, misfireCode } from "../../../shared/domain/dtc-table";

function parsed(code: string): ParsedDtc {
  const p = parseDtc(code);
  if (!p.ok) throw new Error(`expected ${code} to parse: ${p.error.message}`);
  return p;
}

describe("DTC form — SAE J2012 / ISO 15031-6", () => {
  it("first letter names the system", () => {
    // Source: SAE J2012 (docs/trade-reference.md) — P powertrain, C chassis, B body, U network.
    expect(parsed("P0300").system).toBe("powertrain");
    expect(parsed("C0123").system).toBe("chassis");
    expect(parsed("B0001").system).toBe("body");
    expect(parsed("U0100").system).toBe("network");
  });

  it("normalizes case, spaces and dashes", () => {
    // Common practice, no source: codes are typed in lower case or with a separator.
    expect(normalizeDtc("p0304")).toBe("P0304");
    expect(normalizeDtc(" p 03-04 ")).toBe("P0304");
    expect(validateDtc("p0304")).toEqual({ ok: true, code: "P0304" });
    expect(parsed("p0304").code).toBe("P0304");
  });

  it.each([
    ["P0", "generic", ["P0300", "P0171", "P0A80"]],
    ["P2", "generic", ["P2096", "P2300"]],
    ["P1", "manufacturer", ["P1000", "P1234", "P1FFF"]],
    ["P30–P33", "manufacturer", ["P3000", "P3100", "P3200", "P3399"]],
    ["P34–P39", "generic", ["P3400", "P3500", "P3999"]],
    ["B/C/U 0", "generic", ["B0001", "C0123", "U0100"]],
    ["B/C/U 1–2", "manufacturer", ["B1000", "B2999", "C1234", "C2000", "U1000", "U2FFF"]],
    ["B/C/U 3", "generic", ["B3000", "C3000", "U3000"]],
  ] as const)("%s codes are %s", (_label, kind, codes) => {
    // Source: SAE J2012 (docs/trade-reference.md) — P0/P2 generic, P1 manufacturer, P30–33 manufacturer,
    // P34–39 generic; B/C/U: 0 generic, 1–2 manufacturer.
    // B/C/U 3: from memory (SAE J2012 reserves the 3 range for standard codes) — the trade
    // reference does not list it; counted as generic.
    for (const c of codes) {
      expect(isGenericDtc(c)).toBe(kind === "generic");
      expect(parsed(c).generic).toBe(kind === "generic");
    }
  });

  it("third character of P0 codes names the subsystem", () => {
    // Source: SAE J2012 (docs/trade-reference.md) — 0–2 fuel/air, 3 ignition/misfire, 4 emissions,
    // 5 idle and speed, 6 computer/outputs, 7–9 transmission.
    expect(parsed("P0000").group).toBe("fuel-air");
    expect(parsed("P0100").group).toBe("fuel-air");
    expect(parsed("P0201").group).toBe("fuel-air");
    expect(parsed("P0300").group).toBe("ignition-misfire");
    expect(parsed("P0420").group).toBe("emissions");
    expect(parsed("P0505").group).toBe("idle-speed");
    expect(parsed("P0601").group).toBe("computer-outputs");
    expect(parsed("P0700").group).toBe("transmission");
    expect(parsed("P0800").group).toBe("transmission");
    expect(parsed("P0900").group).toBe("transmission");
    // Source: docs/trade-reference.md defines these groups for P0 codes only, so P2 codes (generic, SAE
    // J2012) get no group — even P23xx, which are ignition coil codes (from memory).
    expect(parsed("P2300").group).toBeUndefined();
    expect(parsed("P2096").group).toBeUndefined();
    expect(parsed("P2300").generic).toBe(true);
    expect(describeDtc("P2300")).toBe("P2300 — generic powertrain code; no generic description in our table");
    // Manufacturer and non-powertrain codes have no generic group.
    expect(parsed("P1300").group).toBeUndefined();
    expect(parsed("U0100").group).toBeUndefined();
  });

  it("last characters may be hexadecimal", () => {
    // Source: SAE J2012 (docs/trade-reference.md) — last two characters hexadecimal; the two-byte form
    // also gives the third character four bits (from memory).
    expect(validateDtc("P00AF").ok).toBe(true);
    expect(validateDtc("U0FFF").ok).toBe(true);
    expect(validateDtc("P0A80").ok).toBe(true);
  });
});

describe("DTC refusals", () => {
  it.each([
    ["", "empty", "Enter a trouble code, e.g. P0301."],
    ["X0300", "letter", '"X0300" must start with P (powertrain), C (chassis), B (body) or U (network).'],
    ["0300", "letter", '"0300" must start with P (powertrain), C (chassis), B (body) or U (network).'],
    ["P030", "length", '"P030" should be a letter and four characters, e.g. P0301.'],
    ["P03000", "length", '"P03000" should be a letter and four characters, e.g. P0301.'],
    ["P4300", "second-character", '"P4300": the character after the letter must be 0, 1, 2 or 3.'],
    ["PA300", "second-character", '"PA300": the character after the letter must be 0, 1, 2 or 3.'],
    ["P030G", "character", '"P030G": the last three characters must be digits 0–9 or letters A–F.'],
    ["P03Z0", "character", '"P03Z0": the last three characters must be digits 0–9 or letters A–F.'],
    ["P03.0", "character", '"P03.0": the last three characters must be digits 0–9 or letters A–F.'],
  ])("%j is refused (%s)", (code, reason, message) => {
    // Source: SAE J2012 (docs/trade-reference.md) — P/C/B/U, then 0–3, then three hexadecimal characters.
    // The messages are the product's wording (project rule: a refusal says what to type).
    const v = validateDtc(code);
    expect(v).toEqual({ ok: false, code, error: { code: reason, message } });
    const p = parseDtc(code);
    expect(p.ok).toBe(false);
    expect(describeDtc(code)).toBe(message);
  });
});

describe("Misfire and coil codes", () => {
  it("P0300 is random/multiple misfire and names no cylinder", () => {
    // Source: public generic code lists (docs/trade-reference.md, from memory).
    const p = parsed("P0300");
    expect(p.misfireCylinder).toBeUndefined();
    expect(p.description).toMatch(/random/i);
    expect(p.description).toMatch(/several|multiple/i);
  });

  it.each(Array.from({ length: 12 }, (_, i) => i + 1))("P03%s names cylinder %i", (cyl) => {
    // Source: public generic code lists (docs/trade-reference.md, from memory) — P0301–P0312 misfire in cylinder 1–12.
    const code = `P03${String(cyl).padStart(2, "0")}`;
    expect(misfireCode(cyl)).toBe(code);
    const p = parsed(code);
    expect(p.misfireCylinder).toBe(cyl);
    expect(misfireCylinderOf(code)).toBe(cyl);
    expect(p.description).toMatch(/misfire/i);
    expect(p.description).toMatch(new RegExp(`cylinder ${cyl}\\b`));
  });

  it("codes near the misfire range name no cylinder", () => {
    // Source: SAE J2012 numbering — P030A–P030F, P0313 are not per-cylinder misfire codes (from memory).
    expect(misfireCylinderOf("P030A")).toBeUndefined();
    expect(misfireCylinderOf("P0313")).toBeUndefined();
    expect(misfireCylinderOf("P1301")).toBeUndefined();
  });

  it("P0350 and P0351–P0362 are coil circuits A–L; the letter-to-cylinder mapping is the maker's", () => {
    // Source: public generic code lists (docs/trade-reference.md, from memory).
    expect(parsed("P0350").description).toMatch(/coil/i);
    const letters = "ABCDEFGHIJKL";
    for (let i = 0; i < 12; i++) {
      const code = `P03${51 + i}`;
      const p = parsed(code);
      expect(p.coil).toBe(letters[i]);
      expect(p.description).toMatch(new RegExp(`coil ${letters[i]}\\b`, "i"));
      expect(p.description).toMatch(/maker/);
      expect(p.misfireCylinder).toBeUndefined();
    }
  });
});

describe("Bundled descriptions", () => {
  it("lean/rich and catalyst codes name their bank", () => {
    // Source: public generic code lists (docs/trade-reference.md, from memory) — P0171/P0174 lean bank 1/2;
    // P0420 catalyst efficiency below threshold bank 1. P0172/P0175 rich and P0430 bank 2, from memory.
    expect(parsed("P0171").description).toMatch(/lean.*bank 1/i);
    expect(parsed("P0174").description).toMatch(/lean.*bank 2/i);
    expect(parsed("P0172").description).toMatch(/rich.*bank 1/i);
    expect(parsed("P0175").description).toMatch(/rich.*bank 2/i);
    expect(parsed("P0420").description).toMatch(/catalyst|catalytic/i);
    expect(parsed("P0420").description).toMatch(/threshold.*bank 1/i);
    expect(parsed("P0430").description).toMatch(/threshold.*bank 2/i);
  });

  it("common sensors: MAF, MAP, ECT, TPS, CKP, CMP, knock", () => {
    // From memory: generic code lists — P0100 MAF, P0105 MAP, P0115 ECT, P0120 TPS, P0335 crank,
    // P0340 cam, P0325 knock; each block is circuit / range-performance / low / high / intermittent.
    expect(parsed("P0101").description).toMatch(/mass air flow/i);
    expect(parsed("P0102").description).toMatch(/low/i);
    expect(parsed("P0103").description).toMatch(/high/i);
    expect(parsed("P0106").description).toMatch(/manifold absolute pressure/i);
    expect(parsed("P0117").description).toMatch(/coolant temperature.*low/i);
    expect(parsed("P0118").description).toMatch(/coolant temperature.*high/i);
    expect(parsed("P0122").description).toMatch(/throttle position.*low/i);
    expect(parsed("P0335").description).toMatch(/crankshaft/i);
    expect(parsed("P0340").description).toMatch(/camshaft/i);
    expect(parsed("P0325").description).toMatch(/knock/i);
    expect(parsed("P0135").description).toMatch(/heater.*bank 1 sensor 1/i);
    expect(parsed("P0141").description).toMatch(/heater.*bank 1 sensor 2/i);
    expect(parsed("P0442").description).toMatch(/small leak/i);
    expect(parsed("P0455").description).toMatch(/large leak/i);
    expect(parsed("P0401").description).toMatch(/EGR.*lower|insufficient/i);
    expect(parsed("P0500").description).toMatch(/vehicle speed/i);
    expect(parsed("P0506").description).toMatch(/idle.*lower/i);
    expect(parsed("P0507").description).toMatch(/idle.*higher/i);
    expect(parsed("P0204").description).toMatch(/injector.*cylinder 4\b/i);
    expect(parsed("P0212").description).toMatch(/injector.*cylinder 12\b/i);
  });

  it("every code in the listed generic ranges has a description", () => {
    // From memory: generic ranges of SAE J2012 powertrain codes (decimal numbering within each block).
    const ranges: [number, number][] = [
      [100, 124],
      [200, 212],
      [300, 312],
      [325, 344],
      [350, 362],
      [400, 404],
      [440, 456],
      [505, 507],
    ];
    for (const [from, to] of ranges) {
      for (let n = from; n <= to; n++) {
        const code = `P${String(n).padStart(4, "0")}`;
        expect(dtcDescriptions[code], code).toBeTypeOf("string");
      }
    }
    for (const code of ["P0171", "P0172", "P0174", "P0175", "P0420", "P0430", "P0500"]) {
      expect(dtcDescriptions[code], code).toBeTypeOf("string");
    }
    // Table keys are themselves well-formed generic powertrain codes.
    for (const code of Object.keys(dtcDescriptions)) {
      expect(validateDtc(code).ok, code).toBe(true);
      expect(isGenericDtc(code), code).toBe(true);
    }
  });

  it("well-formed unknown codes are valid, kept, without a description", () => {
    // Source: issue rule + SAE J2012 form — a manufacturer code has no generic meaning.
    for (const code of ["P1234", "P0A80", "B1001", "C0040", "U0100", "P3400"]) {
      const p = parsed(code);
      expect(p.description).toBeNull();
      expect(describeDtc(code)).toContain(code);
    }
    expect(describeDtc("P1234")).toMatch(/manufacturer-specific powertrain/);
    expect(describeDtc("U0100")).toMatch(/generic network/);
    expect(describeDtc("p0304")).toBe("P0304 — Misfire detected in cylinder 4");
  });
});

describe("Two-byte form (service 03), from memory", () => {
  it.each([
    [0x03, 0x00, "P0300"],
    [0x01, 0x71, "P0171"],
    [0x04, 0x20, "P0420"],
    [0xc1, 0x00, "U0100"],
    [0x41, 0x23, "C0123"],
  ])("%d %d → %s", (a, b, code) => {
    // From memory (docs/trade-reference.md): bits 7–6 of byte A give the letter (00 P, 01 C, 10 B, 11 U).
    expect(decodeDtcBytes(a, b)).toBe(code);
    expect(encodeDtcBytes(code)).toEqual([a, b]);
  });

  it("bits 5–4 give the first digit and the rest are hexadecimal nibbles", () => {
    // From memory: same bit layout; 0x80 → B, 0x1F/0xAB → P1FAB, 0xB2/0x34 → B3234.
    expect(decodeDtcBytes(0x80, 0x01)).toBe("B0001");
    expect(decodeDtcBytes(0x1f, 0xab)).toBe("P1FAB");
    expect(decodeDtcBytes(0xb2, 0x34)).toBe("B3234");
  });

  it("every byte pair decodes to a well-formed code and back", () => {
    // Literal pairs first — from memory (docs/trade-reference.md): bits 7–6 of byte A give the letter
    // (00 P, 01 C, 10 B, 11 U); 03 00 → P0300, 01 71 → P0171, 04 20 → P0420, C1 00 → U0100, 41 23 → C0123.
    expect(decodeDtcBytes(0x03, 0x00)).toBe("P0300");
    expect(decodeDtcBytes(0x01, 0x71)).toBe("P0171");
    expect(decodeDtcBytes(0x04, 0x20)).toBe("P0420");
    expect(decodeDtcBytes(0xc1, 0x00)).toBe("U0100");
    expect(decodeDtcBytes(0x41, 0x23)).toBe("C0123");
    expect(encodeDtcBytes("P0300")).toEqual([0x03, 0x00]);
    expect(encodeDtcBytes("U0100")).toEqual([0xc1, 0x00]);
    // the letter bits alone (same layout, from memory): 0x00 P, 0x40 C, 0x80 B, 0xC0 U
    expect([0x00, 0x40, 0x80, 0xc0].map((a) => decodeDtcBytes(a, 0x01))).toEqual(["P0001", "C0001", "B0001", "U0001"]);
    // Consistency with the J2012 form: every byte A with a spread of byte B values, each a valid code that encodes back to the same bytes.
    for (let a = 0; a < 256; a++) {
      for (let b = 0; b < 256; b += 17) {
        const code = decodeDtcBytes(a, b);
        expect(validateDtc(code).ok).toBe(true);
        expect(encodeDtcBytes(code)).toEqual([a, b]);
      }
    }
  });

  it("a list skips 00 00 padding; bad bytes are refused", () => {
    // From memory: service 03 responses pad unused code slots with 00 00.
    expect(decodeDtcList([0x03, 0x04, 0x00, 0x00, 0x01, 0x71])).toEqual(["P0304", "P0171"]);
    expect(() => decodeDtcList([0x03])).toThrow(RangeError);
    expect(() => decodeDtcBytes(256, 0)).toThrow(RangeError);
    expect(() => decodeDtcBytes(-1, 0)).toThrow(RangeError);
    expect(() => decodeDtcBytes(1.5, 0)).toThrow(RangeError);
    expect(() => encodeDtcBytes("P4300")).toThrow(RangeError);
  });
});
