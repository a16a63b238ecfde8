/**
 * Diagnostic trouble codes in the SAE J2012 / ISO 15031-6 form: a letter (P powertrain,
 * C chassis, B body, U network) and four characters. Pure, browser-safe.
 */
import { coilLetterOf, dtcDescriptions } from "./dtc-table";

export const dtcSystems = ["powertrain", "chassis", "body", "network"] as const;
export type DtcSystem = (typeof dtcSystems)[number];

const SYSTEM_BY_LETTER: Readonly<Record<string, DtcSystem>> = {
  P: "powertrain",
  C: "chassis",
  B: "body",
  U: "network",
};

/**
 * Subsystem groups of generic powertrain codes: the third character of P0 codes (SAE J2012 as
 * given in the trade reference, which defines the groups for P0 only; P2 codes get no group).
 */
export const dtcGroups = [
  "fuel-air",
  "ignition-misfire",
  "emissions",
  "idle-speed",
  "computer-outputs",
  "transmission",
  "hybrid-propulsion",
] as const;
export type DtcGroup = (typeof dtcGroups)[number];

export const dtcGroupLabels: Readonly<Record<DtcGroup, string>> = {
  "fuel-air": "Fuel and air metering",
  "ignition-misfire": "Ignition system or misfire",
  emissions: "Auxiliary emission controls",
  "idle-speed": "Vehicle speed and idle control",
  "computer-outputs": "Computer and output circuits",
  transmission: "Transmission",
  "hybrid-propulsion": "Hybrid propulsion",
};

/** The form: letter, 0–3, then three hexadecimal characters (the third is hexadecimal in the two-byte form too). */
const DTC_FORM = /^[PCBU][0-3][0-9A-F]{3}$/;

export interface DtcIssue {
  /** "empty" | "letter" | "length" | "second-character" | "character" */
  code: string;
  message: string;
}

export interface ParsedDtc {
  ok: true;
  code: string;
  system: DtcSystem;
  /** true for SAE-defined (generic/standard) codes, false for manufacturer-specific ones */
  generic: boolean;
  /** for P0 codes only: the subsystem named by the third character */
  group?: DtcGroup;
  /** P0301–P0312: the cylinder the misfire code names */
  misfireCylinder?: number;
  /** P0351–P0362: the coil letter A–L (the letter-to-cylinder mapping is the maker's) */
  coil?: string;
  /** generic description from the bundled table, null when the code is not in it */
  description: string | null;
}

export interface DtcParseError {
  ok: false;
  /** the normalized input */
  code: string;
  error: DtcIssue;
}

/** Trim, uppercase, and drop spaces and dashes: " p0304" → "P0304", "p-0304" → "P0304". */
export function normalizeDtc(code: string): string {
  return String(code ?? "")
    .trim()
    .toUpperCase()
    .replace(/[\s\-\u2010-\u2015]+/g, "");
}

function issue(input: string): DtcIssue | null {
  if (input.length === 0) return { code: "empty", message: "Enter a trouble code, e.g. P0301." };
  if (!"PCBU".includes(input[0])) {
    return {
      code: "letter",
      message: `"${input}" must start with P (powertrain), C (chassis), B (body) or U (network).`,
    };
  }
  if (input.length !== 5) {
    return {
      code: "length",
      message: `"${input}" should be a letter and four characters, e.g. P0301.`,
    };
  }
  if (!/[0-3]/.test(input[1])) {
    return {
      code: "second-character",
      message: `"${input}": the character after the letter must be 0, 1, 2 or 3.`,
    };
  }
  if (!DTC_FORM.test(input)) {
    return {
      code: "character",
      message: `"${input}": the last three characters must be digits 0–9 or letters A–F.`,
    };
  }
  return null;
}

/** Structural check of the J2012 form. `code` is the normalized input. */
export function validateDtc(code: string): { ok: true; code: string } | { ok: false; code: string; error: DtcIssue } {
  const c = normalizeDtc(code);
  const e = issue(c);
  return e ? { ok: false, code: c, error: e } : { ok: true, code: c };
}

/** True for a well-formed code (after normalization). */
export function isDtc(code: string): boolean {
  return validateDtc(code).ok;
}

/**
 * Generic (SAE-defined) or manufacturer-specific, from the second (and for P3 the third)
 * character, per SAE J2012: P0, P2 generic; P1 manufacturer; P30–P33 manufacturer, P34–P39
 * generic; B/C/U: 0 generic, 1–2 manufacturer. B3/C3/U3 are counted as generic — from memory
 * (SAE J2012 reserves the 3 range for standard codes); the trade reference does not list them.
 * P3A–P3F are outside the reference's table and counted as generic (SAE-reserved), an assumption.
 */
export function isGenericDtc(code: string): boolean {
  const c = normalizeDtc(code);
  const letter = c[0];
  const d2 = c[1];
  if (letter === "P") {
    if (d2 === "0" || d2 === "2") return true;
    if (d2 === "1") return false;
    // P3
    const d3 = c[2];
    return !(d3 >= "0" && d3 <= "3");
  }
  // B3/C3/U3: from memory (SAE J2012 reserves the 3 range for standard codes)
  return d2 === "0" || d2 === "3";
}

function groupOf(c: string): DtcGroup | undefined {
  // the reference defines the groups for P0 codes only
  if (c[0] !== "P" || c[1] !== "0") return undefined;
  const d3 = c[2];
  if (d3 >= "0" && d3 <= "2") return "fuel-air";
  if (d3 === "3") return "ignition-misfire";
  if (d3 === "4") return "emissions";
  if (d3 === "5") return "idle-speed";
  if (d3 === "6") return "computer-outputs";
  if (d3 >= "7" && d3 <= "9") return "transmission";
  // P0A–P0C: hybrid propulsion (from memory; not in the trade reference's table)
  if (d3 >= "A" && d3 <= "C") return "hybrid-propulsion";
  return undefined;
}

/** The cylinder a misfire code names: P0301–P0312 → 1–12; otherwise undefined. */
export function misfireCylinderOf(code: string): number | undefined {
  const m = /^P03(0[1-9]|1[0-2])$/.exec(normalizeDtc(code));
  return m ? Number(m[1]) : undefined;
}

/** Parse a code: its system, generic or not, group, misfire cylinder and description. */
export function parseDtc(code: string): ParsedDtc | DtcParseError {
  const v = validateDtc(code);
  if (!v.ok) return v;
  const c = v.code;
  const result: ParsedDtc = {
    ok: true,
    code: c,
    system: SYSTEM_BY_LETTER[c[0]],
    generic: isGenericDtc(c),
    description: dtcDescriptions[c] ?? null,
  };
  const group = groupOf(c);
  if (group) result.group = group;
  const cyl = misfireCylinderOf(c);
  if (cyl !== undefined) result.misfireCylinder = cyl;
  const coil = coilLetterOf(c);
  if (coil !== undefined) result.coil = coil;
  return result;
}

/**
 * The two-byte form of service 03 / 07 / 0A responses (from memory): bits 7–6 of byte A give the
 * letter (00 P, 01 C, 10 B, 11 U), bits 5–4 the first digit, bits 3–0 the second; byte B the last two.
 * `03 00` → P0300, `C1 00` → U0100. (00 00 decodes to P0000, which responses use as padding.)
 */
export function decodeDtcBytes(a: number, b: number): string {
  for (const [name, v] of [
    ["a", a],
    ["b", b],
  ] as const) {
    if (!Number.isInteger(v) || v < 0 || v > 255)
      throw new RangeError(`Byte ${name} must be an integer 0–255, got ${v}.`);
  }
  const letter = "PCBU"[a >> 6];
  const d1 = (a >> 4) & 0x3;
  const hex = (n: number) => n.toString(16).toUpperCase();
  return letter + d1 + hex(a & 0xf) + hex(b >> 4) + hex(b & 0xf);
}

/** The inverse of decodeDtcBytes: "P0300" → [0x03, 0x00]. Throws RangeError for a malformed code. */
export function encodeDtcBytes(code: string): [number, number] {
  const v = validateDtc(code);
  if (!v.ok) throw new RangeError(v.error.message);
  const c = v.code;
  const a = ("PCBU".indexOf(c[0]) << 6) | (Number(c[1]) << 4) | parseInt(c[2], 16);
  return [a, parseInt(c.slice(3), 16)];
}

/** Decode a run of code bytes (pairs), skipping the 00 00 padding pairs. Throws on an odd length. */
export function decodeDtcList(bytes: readonly number[]): string[] {
  if (bytes.length % 2 !== 0) throw new RangeError("Trouble-code bytes come in pairs.");
  const out: string[] = [];
  for (let i = 0; i < bytes.length; i += 2) {
    if (bytes[i] === 0 && bytes[i + 1] === 0) continue;
    out.push(decodeDtcBytes(bytes[i], bytes[i + 1]));
  }
  return out;
}

const SYSTEM_LABELS: Readonly<Record<DtcSystem, string>> = {
  powertrain: "powertrain",
  chassis: "chassis",
  body: "body",
  network: "network communication",
};

/**
 * A one-line description for people: the bundled generic description when there is one, else
 * what the form itself says (e.g. "P1234 — manufacturer-specific powertrain code; no generic
 * description"). Malformed input returns the validation message.
 */
export function describeDtc(code: string): string {
  const p = parseDtc(code);
  if (!p.ok) return p.error.message;
  if (p.description) return `${p.code} — ${p.description}`;
  const kind = p.generic ? "generic" : "manufacturer-specific";
  const group = p.group ? ` (${dtcGroupLabels[p.group].toLowerCase()})` : "";
  return `${p.code} — ${kind} ${SYSTEM_LABELS[p.system]} code${group}; no generic description in our table`;
}
