import { describe, expect, it } from "vitest";
import type { z } from "zod";
import {
  caseCreateSchema,
  caseDraftSchema,
  caseListQuerySchema,
  casePatchSchema,
  symptoms,
  vehicleSchema,
  vehicleVinWarnings,
} from "../../../shared/schemas/case";

// Field rules follow issue 3's case form ("Product rule (issue 3)" below: the fields, required vs
// optional, draft at any point, PATCH while draft, the list's filters and paging); the limits
// (text lengths, 30 codes, years 1950–2050, page size) are the project's own choice in
// shared/schemas/case.ts LIMITS ("project rule" below). VIN and code rules are those of 49 CFR 565
// and SAE J2012 (checked in vin.test.ts and dtc.test.ts). Makes and models here are invented names.

function issuesOf(schema: z.ZodType, value: unknown): { path: string; message: string }[] {
  const r = schema.safeParse(value);
  expect(r.success, "expected a refusal").toBe(false);
  return r.success ? [] : r.error.issues.map((i) => ({ path: i.path.join("."), message: i.message }));
}

function pathsOf(schema: z.ZodType, value: unknown): string[] {
  return issuesOf(schema, value).map((i) => i.path);
}

const goodCase = {
  vehicle: {
    vin: "1M8GDM9AXKP042788", // Source: Wikipedia's VIN article example, check digit X
    year: 1989,
    make: "Veltra",
    model: "Arden 2.0",
    engine: "2.0 I4",
    fuel: "gasoline",
    mileage: 142000,
    mileageUnit: "km",
    transmission: "manual",
  },
  complaint: "Misfire under load when cold, light flashes.",
  codes: ["P0304", "P0171"],
  system: "ignition",
  symptoms: ["misfire", "check-engine-light-flashing"],
  conditions: { temperature: "cold", load: ["load", "cruise"], occurrence: "intermittent" },
  testsDone: "Swapped coils 3 and 4, misfire stayed on 4.",
  partsReplaced: "Plugs",
  notes: "",
};

describe("caseCreateSchema", () => {
  it("accepts a complete case and keeps its values", () => {
    // Product rule (issue 3): vehicle, complaint, codes, system, symptoms, conditions, tests done, parts, notes.
    const r = caseCreateSchema.parse(goodCase);
    expect(r.vehicle).toEqual({ ...goodCase.vehicle, vinCheckOverride: false });
    expect(r.codes).toEqual(["P0304", "P0171"]);
    expect(r.conditions).toEqual(goodCase.conditions);
  });

  it("fills defaults for a minimal case", () => {
    // Product rule (issue 3: "required where the product needs it, sensible defaults otherwise");
    // the default values themselves (mi, any temperature/load, no override) are the project's choice.
    const r = caseCreateSchema.parse({
      vehicle: { make: "Korrin", model: "Vale" },
      complaint: "No start",
      system: "starting-charging",
    });
    expect(r).toEqual({
      vehicle: { make: "Korrin", model: "Vale", vinCheckOverride: false, mileageUnit: "mi" },
      complaint: "No start",
      codes: [],
      system: "starting-charging",
      symptoms: [],
      conditions: { temperature: "any", load: ["any"] },
      testsDone: "",
      partsReplaced: "",
      notes: "",
    });
  });

  it("normalizes, validates and deduplicates trouble codes (SAE J2012 form)", () => {
    // Source: SAE J2012 form (docs/trade-reference.md) — P4300 has 4 after the letter, X123 no system letter;
    // normalizing case/dashes and deduplicating: common practice, no source.
    const r = caseCreateSchema.parse({ ...goodCase, codes: ["p0304", " P0304", "p-0171", "U0100"] });
    expect(r.codes).toEqual(["P0304", "P0171", "U0100"]);
    // one text box: comma/space separated
    expect(caseCreateSchema.parse({ ...goodCase, codes: "p0301, p0302;P0301 p1234" }).codes).toEqual([
      "P0301",
      "P0302",
      "P1234",
    ]);
    // malformed codes are refused at their index
    const issues = issuesOf(caseCreateSchema, { ...goodCase, codes: ["P0304", "P4300", "X123"] });
    expect(issues.map((i) => i.path)).toEqual(["codes.1", "codes.2"]);
    expect(issues[0].message).toMatch(/0, 1, 2 or 3/);
  });

  it("allows up to 30 distinct codes (after deduplication)", () => {
    // Project rule (LIMITS.codes = 30).
    const codes = (n: number) => Array.from({ length: n }, (_, i) => `P1${String(i).padStart(3, "0")}`);
    expect(caseCreateSchema.parse({ ...goodCase, codes: codes(30) }).codes).toHaveLength(30);
    expect(caseCreateSchema.parse({ ...goodCase, codes: [...codes(30), ...codes(30)] }).codes).toHaveLength(30);
    const issues = issuesOf(caseCreateSchema, { ...goodCase, codes: codes(31) });
    expect(issues).toEqual([{ path: "codes", message: "Enter at most 30 trouble codes." }]);
  });

  it("refuses missing required fields with friendly messages at their paths", () => {
    // Product rule (issue 3): make, model, complaint and system are needed to open a case; the
    // messages are the product's wording.
    const issues = issuesOf(caseCreateSchema, { vehicle: { make: " ", model: "" }, complaint: "" });
    expect(issues).toEqual([
      { path: "vehicle.make", message: "Enter the make." },
      { path: "vehicle.model", message: "Enter the model." },
      { path: "complaint", message: "Describe the customer's complaint." },
      { path: "system", message: "Choose the system concerned." },
    ]);
    expect(pathsOf(caseCreateSchema, {})).toEqual(["vehicle", "complaint", "system"]);
  });

  it("refuses over-long text", () => {
    // Project rule (LIMITS: complaint, tests done and notes 4000 characters, parts replaced 2000).
    expect(pathsOf(caseCreateSchema, { ...goodCase, complaint: "x".repeat(4001) })).toEqual(["complaint"]);
    expect(caseCreateSchema.parse({ ...goodCase, complaint: "x".repeat(4000) }).complaint).toHaveLength(4000);
    expect(pathsOf(caseCreateSchema, { ...goodCase, testsDone: "x".repeat(4001) })).toEqual(["testsDone"]);
    expect(pathsOf(caseCreateSchema, { ...goodCase, partsReplaced: "x".repeat(2001) })).toEqual(["partsReplaced"]);
    expect(pathsOf(caseCreateSchema, { ...goodCase, notes: "x".repeat(4001) })).toEqual(["notes"]);
  });

  it("refuses unknown choices and keys", () => {
    // Product rule (issue 3): system, symptoms and conditions (cold/hot, idle/cruise/load,
    // intermittent or constant) come from fixed lists; a case's status is not set by the form.
    expect(pathsOf(caseCreateSchema, { ...goodCase, system: "brakes" })).toEqual(["system"]);
    expect(pathsOf(caseCreateSchema, { ...goodCase, symptoms: ["misfire", "squeal"] })).toEqual(["symptoms.1"]);
    expect(pathsOf(caseCreateSchema, { ...goodCase, conditions: { temperature: "warm" } })).toEqual([
      "conditions.temperature",
    ]);
    expect(pathsOf(caseCreateSchema, { ...goodCase, conditions: { load: ["idle", "wot"] } })).toEqual([
      "conditions.load.1",
    ]);
    expect(pathsOf(caseCreateSchema, { ...goodCase, conditions: { occurrence: "sometimes" } })).toEqual([
      "conditions.occurrence",
    ]);
    expect(pathsOf(caseCreateSchema, { ...goodCase, status: "queued" })).toEqual([""]);
    expect(caseCreateSchema.parse({ ...goodCase, symptoms: ["stall", "stall"] }).symptoms).toEqual(["stall"]);
    expect(symptoms).toContain("check-engine-light-flashing");
  });
});

describe("vehicleSchema", () => {
  const base = { make: "Astaro", model: "Lune" };

  it("normalizes the VIN", () => {
    // Common practice, no source: VINs are written with spaces/dashes and in lower case; "" = no VIN.
    expect(vehicleSchema.parse({ ...base, vin: " 1m8gdm9a-xkp 042788" }).vin).toBe("1M8GDM9AXKP042788");
    expect(vehicleSchema.parse({ ...base, vin: "" }).vin).toBe("");
  });

  it("refuses a malformed VIN at vehicle.vin, naming the position (49 CFR 565.13)", () => {
    // Source: 49 CFR 565.13 (O never used), 565.15 (17 characters; U never a year code) — docs/trade-reference.md.
    const issues = issuesOf(caseCreateSchema, {
      ...goodCase,
      vehicle: { ...goodCase.vehicle, vin: "1M8GDM9AXKP04278O" },
    });
    expect(issues.map((i) => i.path)).toEqual(["vehicle.vin"]);
    expect(issues[0].message).toMatch(/Position 17/);
    expect(pathsOf(vehicleSchema, { ...base, vin: "1M8GDM9AXKP0427" })).toEqual(["vin"]);
    expect(pathsOf(vehicleSchema, { ...base, vin: "1M8GDM9AXUP042788" })).toEqual(["vin"]); // U in position 10
  });

  it("a wrong check digit is not a schema error; it is a warning the tech may override", () => {
    // Source: docs/trade-reference.md — SGZCZ43D13S812715 would need check digit X (49 CFR 565.15).
    const v = vehicleSchema.parse({ ...base, vin: "SGZCZ43D13S812715" });
    expect(v.vin).toBe("SGZCZ43D13S812715");
    expect(vehicleVinWarnings(v)).toEqual([expect.objectContaining({ code: "check-digit", expected: "X" })]);
    const overridden = vehicleSchema.parse({ ...base, vin: "SGZCZ43D13S812715", vinCheckOverride: true });
    expect(overridden.vinCheckOverride).toBe(true);
    expect(vehicleVinWarnings(overridden)).toEqual([]);
    // Source: 5GZCZ43D13S812715 is valid (docs/trade-reference.md) — no warning.
    expect(vehicleVinWarnings(vehicleSchema.parse({ ...base, vin: "5GZCZ43D13S812715" }))).toEqual([]);
  });

  it("warns (never refuses) when the VIN's model year differs from the year field", () => {
    // Source: 49 CFR 565.15 Table II and 565.15(b) (docs/trade-reference.md): 1M8GDM9AXKP042788 has K in
    // position 10 and numeric position 7 → 1989; 1J9RP1A36A1644345 has A and alphabetic position 7 → 2010.
    const v = vehicleSchema.parse({ ...base, vin: "1M8GDM9AXKP042788", year: 2019 });
    expect(v.year).toBe(2019); // not a schema error
    expect(vehicleVinWarnings(v)).toEqual([
      {
        code: "year-mismatch",
        expected: "1989",
        message:
          "The VIN gives model year 1989 (position 10), but the year entered is 2019. Check both; the model year can differ from the year the vehicle was built or sold.",
      },
    ]);
    expect(vehicleVinWarnings(vehicleSchema.parse({ ...base, vin: "1M8GDM9AXKP042788", year: 1989 }))).toEqual([]);
    expect(vehicleVinWarnings({ vin: "1J9RP1A36A1644345", year: 2009 }).map((w) => w.code)).toEqual(["year-mismatch"]);
    expect(vehicleVinWarnings({ vin: "1J9RP1A36A1644345", year: 2010 })).toEqual([]);
    // no year entered, or no VIN: nothing to compare (product rule, issue 3: year stays editable)
    expect(vehicleVinWarnings({ vin: "1M8GDM9AXKP042788", year: null })).toEqual([]);
    expect(vehicleVinWarnings({ vin: "", year: 2019 })).toEqual([]);
    // the technician may override VIN warnings (product rule, issue 3)
    expect(vehicleVinWarnings({ vin: "1M8GDM9AXKP042788", year: 2019, vinCheckOverride: true })).toEqual([]);
    // with a wrong check digit too (SGZCZ43D13S812715 needs X, docs/trade-reference.md; '3' in position 10 → 2003,
    // position 7 '3' numeric): both warnings
    expect(vehicleVinWarnings({ vin: "SGZCZ43D13S812715", year: 2004 }).map((w) => w.code)).toEqual([
      "check-digit",
      "year-mismatch",
    ]);
  });

  it("a VIN from outside North America without a year code is a warning, not a schema error", () => {
    // From memory: such VINs need not carry a model-year code in position 10 (U here); the error
    // stays for North American WMIs (49 CFR 565.15 Table II), see the malformed-VIN test above.
    const vin = "WM8GDM9A2UP042788"; // check digit 2 by 49 CFR 565.15 (weighted sum 409, 409 mod 11 = 2)
    const v = vehicleSchema.parse({ ...base, vin, year: 2019 });
    expect(v.vin).toBe(vin);
    expect(vehicleVinWarnings(v).map((w) => w.code)).toEqual(["year-character"]);
    expect(vehicleVinWarnings({ ...v, vinCheckOverride: true })).toEqual([]);
  });

  it("year: whole number 1950–2050, blank clears it", () => {
    // Project rule (LIMITS.yearMin/yearMax; blank clears an optional field, shared/schemas/case.ts).
    expect(vehicleSchema.parse({ ...base, year: 1950 }).year).toBe(1950);
    expect(vehicleSchema.parse({ ...base, year: "2050" }).year).toBe(2050);
    expect(vehicleSchema.parse({ ...base, year: "" }).year).toBeNull();
    expect(vehicleSchema.parse({ ...base, year: Number.NaN }).year).toBeNull();
    for (const bad of [1949, 2051, 1999.5, "19x9", true]) {
      expect(pathsOf(vehicleSchema, { ...base, year: bad }), String(bad)).toEqual(["year"]);
    }
    expect(issuesOf(vehicleSchema, { ...base, year: 1949 })[0].message).toBe(
      "Enter a model year between 1950 and 2050.",
    );
  });

  it("mileage: whole number ≥ 0 with unit km or mi", () => {
    // Product rule (issue 3: mileage); whole numbers in km or mi: project rule.
    expect(vehicleSchema.parse({ ...base, mileage: 0, mileageUnit: "km" })).toMatchObject({
      mileage: 0,
      mileageUnit: "km",
    });
    expect(vehicleSchema.parse({ ...base, mileage: "98765" }).mileage).toBe(98765);
    expect(pathsOf(vehicleSchema, { ...base, mileage: -1 })).toEqual(["mileage"]);
    expect(pathsOf(vehicleSchema, { ...base, mileage: 12.5 })).toEqual(["mileage"]);
    expect(pathsOf(vehicleSchema, { ...base, mileageUnit: "miles" })).toEqual(["mileageUnit"]);
  });

  it("fuel and transmission come from their lists; blank clears them", () => {
    // Product rule (issue 3: fuel, transmission); the lists themselves are the project's choice.
    for (const fuel of ["gasoline", "diesel", "hybrid", "flex", "lpg-cng", "other"]) {
      expect(vehicleSchema.parse({ ...base, fuel }).fuel).toBe(fuel);
    }
    for (const transmission of ["automatic", "manual", "cvt", "dct", "other"]) {
      expect(vehicleSchema.parse({ ...base, transmission }).transmission).toBe(transmission);
    }
    expect(vehicleSchema.parse({ ...base, fuel: "", transmission: null })).toMatchObject({
      fuel: null,
      transmission: null,
    });
    expect(pathsOf(vehicleSchema, { ...base, fuel: "kerosene", transmission: "sequential" })).toEqual([
      "fuel",
      "transmission",
    ]);
  });
});

describe("caseDraftSchema and casePatchSchema", () => {
  it("a draft may be saved at any point", () => {
    // Product rule (issue 3: "Saved as a draft at any point").
    expect(caseDraftSchema.parse({})).toEqual({});
    expect(caseDraftSchema.parse({ vehicle: {} })).toEqual({ vehicle: {} });
    expect(caseDraftSchema.parse({ complaint: "", vehicle: { make: "" } })).toEqual({
      complaint: "",
      vehicle: { make: "" },
    });
  });

  it("applies no defaults (a patch must not overwrite what it does not mention)", () => {
    // Product rule (issue 3: PATCH /api/cases/:id, editable while draft); no defaults: project rule.
    expect(casePatchSchema.parse({ notes: "called customer" })).toEqual({ notes: "called customer" });
    expect(casePatchSchema.parse({ conditions: { temperature: "hot" } })).toEqual({
      conditions: { temperature: "hot" },
    });
    expect(casePatchSchema.parse({ vehicle: { year: "" } })).toEqual({ vehicle: { year: null } });
  });

  it("values that are present must be well formed", () => {
    // Product rule (issue 3): a malformed VIN is an error (49 CFR 565.13: no I); code form SAE J2012;
    // year range and text limits: project rule.
    expect(pathsOf(caseDraftSchema, { vehicle: { vin: "1M8GDM9AXKP04278I" } })).toEqual(["vehicle.vin"]);
    expect(pathsOf(caseDraftSchema, { vehicle: { year: 1900 } })).toEqual(["vehicle.year"]);
    expect(pathsOf(caseDraftSchema, { codes: ["P0301", "P03"] })).toEqual(["codes.1"]);
    expect(pathsOf(caseDraftSchema, { system: "brakes" })).toEqual(["system"]);
    expect(pathsOf(casePatchSchema, { complaint: "x".repeat(4001) })).toEqual(["complaint"]);
    expect(pathsOf(casePatchSchema, { status: "queued" })).toEqual([""]);
    expect(casePatchSchema.parse({ codes: ["p0420", "P0420"] })).toEqual({ codes: ["P0420"] });
    expect(casePatchSchema.parse({ system: "" })).toEqual({ system: null });
  });
});

describe("caseListQuerySchema", () => {
  it("defaults page 1 and page size 20", () => {
    // Product rule (issue 3: the case list is paginated); page size 20: project rule.
    expect(caseListQuerySchema.parse({})).toEqual({ page: 1, pageSize: 20 });
  });

  it("coerces query strings", () => {
    // Product rule (issue 3: GET /api/cases?status=&q=&page=); the last of repeated keys: project rule.
    expect(
      caseListQuerySchema.parse({
        status: "draft",
        q: "  misfire ",
        page: "3",
        pageSize: "50",
        sort: "updatedAt",
        dir: "asc",
      }),
    ).toEqual({ status: "draft", q: "misfire", page: 3, pageSize: 50, sort: "updatedAt", dir: "asc" });
    expect(caseListQuerySchema.parse({ status: "", q: "", page: "" })).toEqual({ page: 1, pageSize: 20 });
    expect(caseListQuerySchema.parse({ page: ["2", "4"] }).page).toBe(4);
  });

  it("refuses bad values with their field paths", () => {
    // Project rule (LIMITS.pageSizeMax = 100; pages from 1; fixed status, sort and direction lists).
    expect(pathsOf(caseListQuerySchema, { page: "0" })).toEqual(["page"]);
    expect(pathsOf(caseListQuerySchema, { page: "abc" })).toEqual(["page"]);
    expect(pathsOf(caseListQuerySchema, { page: "1.5" })).toEqual(["page"]);
    expect(pathsOf(caseListQuerySchema, { pageSize: "101" })).toEqual(["pageSize"]);
    expect(pathsOf(caseListQuerySchema, { pageSize: "0" })).toEqual(["pageSize"]);
    expect(caseListQuerySchema.parse({ pageSize: "100" }).pageSize).toBe(100);
    expect(pathsOf(caseListQuerySchema, { status: "lost", sort: "price", dir: "up" })).toEqual([
      "status",
      "sort",
      "dir",
    ]);
    expect(issuesOf(caseListQuerySchema, { pageSize: "101" })[0].message).toBe("Page size must be at most 100.");
  });
});
