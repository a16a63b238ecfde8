/**
 * The demo's cases: one story per case, invented, each ending in a different state of the desk.
 * Times are minutes relative to the moment of seeding (negative = in the past). The captures come
 * from demo/traces.ts (the project's generators, fixed seeds).
 */
import type { CaseDraftInput } from "../shared/schemas/case";
import type { CaseStatus } from "../shared/domain/case-status";
import type { AnswerInput } from "../shared/schemas/queue";
import type { DataRequest } from "../shared/schemas/realtime";
import { demoVin } from "./vehicles";
import type { SecondaryEventTruth, SecondaryTruth } from "./generators/secondary";
import { coilSet, compressionCapture, crankCapture, injectorSet, type DemoTrace } from "./traces";

const HOUR = 60;
const DAY = 24 * HOUR;

export interface DemoAnnotation {
  /** index into the case's traces */
  trace: number;
  kind: "pin" | "span" | "level" | "note";
  /** where to put it, from the trace's known truth (a generated capture's truth, its shape by kind) */
  at: (truth: unknown) => { t0: number; t1?: number; level?: number };
  label?: string;
  by: "expert" | "tech";
}

export interface DemoMessage {
  by: "expert" | "tech";
  text: string;
  request?: DataRequest;
}

export interface DemoCase {
  key: string;
  shop: string;
  /** technician (person key) who opens it */
  by: string;
  final: CaseStatus;
  /** when the draft was opened */
  openedAt: number;
  draft: CaseDraftInput;
  traces: () => DemoTrace[];
  tier?: "standard" | "priority";
  /** minutes after openedAt for each step that applies */
  paidAfter?: number;
  expert?: string;
  claimedAfter?: number;
  annotations?: DemoAnnotation[];
  messages?: DemoMessage[];
  requestData?: { message: string };
  answers?: AnswerInput[];
  answeredAfter?: number;
  confirmations?: { fixed: boolean; note: string; rating?: number }[];
  withdrawnAfter?: number;
  refundedAfter?: number;
  refundReason?: string;
}

/** Firing time and burn time of event k of a generated secondary capture (the marks sit on coil captures). */
const ev = (truth: unknown, k = 0): SecondaryEventTruth => (truth as SecondaryTruth).events[k];

export const DEMO_CASES: DemoCase[] = [
  // ---- claimed, live: four coils, cylinder 3's coil breaking down; expert and tech talking now
  {
    key: "live-coil",
    shop: "cinderwick",
    by: "dana",
    final: "claimed",
    openedAt: -95,
    draft: {
      vehicle: {
        vin: demoVin("Veltra", "TS2G4", 2016, 417),
        year: 2016,
        make: "Veltra",
        model: "Tessary",
        engine: "2.0 I4",
        fuel: "gasoline",
        mileage: 84210,
        mileageUnit: "mi",
        transmission: "automatic",
      },
      complaint:
        "Misfire under load on the highway with a flashing check-engine light; the idle is slightly rough once warm.",
      codes: ["P0303", "P0300"],
      system: "ignition",
      symptoms: ["misfire", "rough-idle", "check-engine-light-flashing"],
      conditions: { temperature: "hot", load: ["load", "idle"], occurrence: "intermittent" },
      testsDone:
        "Swapped coils 1 and 3: the misfire stayed on cylinder 3 the first day and moved to 1 the next morning. Plugs look even, gapped at 0.8 mm. Injector balance test normal.",
      partsReplaced: "Spark plugs, 12,000 mi ago.",
      notes: "Captures at a steady 2000 rpm, engine warm, capacitive pickup on each coil.",
    },
    traces: () =>
      coilSet({
        seed: 300,
        cylinders: 4,
        faults: { 3: "coil-breakdown" },
        sampleRateHz: 1_000_000,
        rpm: 2000,
        events: 2,
        filePrefix: "tessary_2000rpm",
      }),
    tier: "standard",
    paidAfter: 40,
    expert: "mira",
    claimedAfter: 55,
    annotations: [
      {
        trace: 2,
        kind: "span",
        by: "expert",
        at: (t) => ({ t0: ev(t).timeS, t1: ev(t).timeS + ev(t).burnTimeMs / 1000 }),
        label: "Short burn: about 0.8 ms here against 1.5 ms on the other coils",
      },
      {
        trace: 2,
        kind: "pin",
        by: "expert",
        at: (t) => ({ t0: ev(t).timeS, level: ev(t).peak }),
        label: "Low firing line for this gap",
      },
      {
        trace: 0,
        kind: "level",
        by: "expert",
        at: (t) => ({ t0: ev(t).timeS, level: ev(t).burnLevel }),
        label: "Healthy spark line level for comparison",
      },
      { trace: 2, kind: "note", by: "tech", at: (t) => ({ t0: ev(t, 1).timeS }), label: "Same on the second firing" },
    ],
    messages: [
      {
        by: "expert",
        text: "Thanks for the four captures. Coil 3's spark line is about half as long as the others and its firing line is low. I pinned it and marked the burn.",
      },
      { by: "tech", text: "That's the cylinder that moved when I swapped coils. The coil is the original one." },
      {
        by: "expert",
        text: "Before ordering: look at the boot on 3 for carbon tracking and check the plug well for oil. With the engine off, of course; secondary ignition is tens of kV.",
      },
      { by: "tech", text: "Car is on the lift, pulling the boot now." },
    ],
  },

  // ---- queued: wide plug gap on cylinder 2, waiting for an expert (the demo expert may claim it)
  {
    key: "queued-gap",
    shop: "cinderwick",
    by: "theo",
    final: "queued",
    openedAt: -50,
    draft: {
      vehicle: {
        vin: demoVin("Astaro", "VN1T4", 2018, 233),
        year: 2018,
        make: "Astaro",
        model: "Vennic",
        engine: "1.4 I4 turbo",
        fuel: "gasoline",
        mileage: 61870,
        mileageUnit: "mi",
        transmission: "manual",
      },
      complaint: "Stumble under boost between 2500 and 3500 rpm; cylinder 2 misfire counter climbs.",
      codes: ["P0302"],
      system: "ignition",
      symptoms: ["misfire", "hesitation", "check-engine-light-on"],
      conditions: { temperature: "any", load: ["load"], occurrence: "constant" },
      testsDone: "Compression even on all four. Coil 2 swapped with coil 4: the misfire stayed on cylinder 2.",
      partsReplaced: "",
      notes: "Captured at 2000 rpm in neutral; the stumble itself only shows on the road.",
    },
    traces: () =>
      coilSet({
        seed: 400,
        cylinders: 4,
        faults: { 2: "wide-gap" },
        sampleRateHz: 1_000_000,
        rpm: 2000,
        events: 2,
        filePrefix: "vennic_2000rpm",
      }),
    tier: "standard",
    paidAfter: 35,
  },

  // ---- needs data: injector 4 closes late; the fuel expert asked for another capture
  {
    key: "needs-data-injector",
    shop: "harrowvale",
    by: "marcus",
    final: "needs_data",
    openedAt: -5 * HOUR,
    draft: {
      vehicle: {
        vin: demoVin("Meridane", "CS2A4", 2013, 512),
        year: 2013,
        make: "Meridane",
        model: "Casselle",
        engine: "2.4 I4",
        fuel: "gasoline",
        mileage: 142300,
        mileageUnit: "km",
        transmission: "automatic",
      },
      complaint: "Rough idle when warm and a fuel smell after shut-down; cylinder 4 misfire at idle only.",
      codes: ["P0304", "P0172"],
      system: "fuel",
      symptoms: ["rough-idle", "misfire", "fuel-smell"],
      conditions: { temperature: "hot", load: ["idle"], occurrence: "constant" },
      testsDone:
        "Fuel pressure 3.8 bar, holds after key-off for 10 minutes. Plugs and coils swapped between 3 and 4: the misfire stays on 4.",
      partsReplaced: "",
      notes: "Driver-side captures of all four injectors at warm idle.",
    },
    traces: () => injectorSet(500, 4, 4),
    tier: "standard",
    paidAfter: 30,
    expert: "tomasz",
    claimedAfter: 70,
    messages: [
      {
        by: "expert",
        text: "Injector 4's pintle hump comes at about 1.8 ms after turn-off; the other three close at about 0.7 ms. That points at a sticking injector, but I'd like to see it under a current clamp too.",
      },
      { by: "tech", text: "I have a low-amp clamp. Idle or raised?" },
      {
        by: "expert",
        text: "Both, please: warm idle first, then a steady 2500 rpm.",
        request: {
          capture: "injector",
          cylinder: 4,
          conditions: "warm idle, then a steady 2500 rpm; low-amp clamp on injector 4's feed",
        },
      },
    ],
    requestData: {
      message:
        "Please add an injector current capture of cylinder 4 (low-amp clamp) at warm idle and at a steady 2500 rpm.",
    },
  },

  // ---- answered: one cylinder low in relative compression; the shop has not confirmed yet
  {
    key: "answered-compression",
    shop: "lantern",
    by: "sunita",
    final: "answered",
    openedAt: -1 * DAY - 6 * HOUR,
    draft: {
      vehicle: {
        vin: demoVin("Tovak", "RG2A5", 2012, 88),
        year: 2012,
        make: "Tovak",
        model: "Ridgan",
        engine: "2.5 I4",
        fuel: "gasoline",
        mileage: 198400,
        mileageUnit: "mi",
        transmission: "automatic",
      },
      complaint:
        "Uneven cranking sound and a rough idle from cold that smooths out after a few minutes. No codes stored.",
      codes: [],
      system: "engine-mechanical",
      symptoms: ["rough-idle", "hard-start"],
      conditions: { temperature: "cold", load: ["idle"], occurrence: "constant" },
      testsDone:
        "Battery 12.6 V at rest, 10.4 V while cranking. Relative compression capture with the fuel pump fuse pulled.",
      partsReplaced: "",
      notes: "Clamp on the battery negative, 1 mV/A range.",
    },
    traces: () => [compressionCapture(600, 3)],
    tier: "standard",
    paidAfter: 20,
    expert: "ines",
    claimedAfter: 95,
    messages: [
      {
        by: "expert",
        text: "The third hump in each cycle is about 70 % of the others. Do you have a cam or ignition sync on a second channel?",
      },
      { by: "tech", text: "No second channel on that capture, sorry. Firing order is 1-3-4-2." },
    ],
    answers: [
      {
        diagnosis:
          "Relative compression: one cylinder in four is about 30 % down; the third stroke after the first in each cycle is low, every cycle.",
        rootCause:
          "Low compression on one cylinder, most likely cylinder 4 if the first hump is cylinder 1 (firing order 1-3-4-2); a valve not sealing when cold fits the symptom that smooths out when warm.",
        recommendedFix:
          "Confirm the cylinder with a cranking compression gauge, then a leak-down test on it to tell valves from rings before any teardown.",
        testsToConfirm:
          "Cranking compression on all four (throttle open, fuel disabled); leak-down on the low one, listening at the intake, exhaust and oil filler.",
      },
    ],
    answeredAfter: 150,
  },

  // ---- resolved: damaged reluctor tooth, crank sensor codes, confirmed fixed
  {
    key: "resolved-reluctor",
    shop: "cinderwick",
    by: "dana",
    final: "resolved",
    openedAt: -12 * DAY,
    draft: {
      vehicle: {
        vin: demoVin("Korrin", "BR1K6", 2015, 640),
        year: 2015,
        make: "Korrin",
        model: "Brisel",
        engine: "1.6 I4",
        fuel: "gasoline",
        mileage: 112950,
        mileageUnit: "mi",
        transmission: "manual",
      },
      complaint:
        "Intermittent stall when hot and a long crank afterwards; the tachometer drops out just before it stalls.",
      codes: ["P0335", "P0336"],
      system: "sensors",
      symptoms: ["stall", "hard-start", "check-engine-light-on"],
      conditions: { temperature: "hot", load: ["idle", "cruise"], occurrence: "intermittent" },
      testsDone:
        "Crank sensor resistance in specification, wiring wiggle test shows nothing. Sensor replaced once already.",
      partsReplaced: "Crankshaft position sensor (aftermarket), 2 weeks ago.",
      notes: "Capture at warm idle straight from the sensor connector, back-probed.",
    },
    traces: () => [crankCapture(700, 17)],
    tier: "priority",
    paidAfter: 15,
    expert: "mira",
    claimedAfter: 25,
    messages: [
      {
        by: "expert",
        text: "Every revolution, the 17th tooth after the gap is much smaller than its neighbours. With a new sensor that's the wheel, not the sensor.",
      },
      { by: "tech", text: "The clutch was replaced last year, so the flywheel side was opened up." },
    ],
    answers: [
      {
        diagnosis:
          "One tooth of the 60-2 reluctor wheel gives a much smaller signal than the others, in the same place every revolution.",
        rootCause:
          "A damaged (chipped or bent) tooth on the reluctor ring; when hot the signal of that tooth drops under the module's threshold and it loses sync.",
        recommendedFix:
          "Inspect the reluctor ring through the sensor hole, turning the engine by hand; replace the ring or flywheel as the manufacturer's procedure says.",
        testsToConfirm:
          "After the repair, a new capture at warm idle: every tooth's amplitude within a few per cent of its neighbours, 58 teeth between gaps.",
      },
    ],
    answeredAfter: 80,
    confirmations: [
      {
        fixed: true,
        note: "Found a tooth bent on the ring from the clutch job. New ring, no stalls in a week.",
        rating: 5,
      },
    ],
  },

  // ---- resolved: fouled plug on cylinder 1
  {
    key: "resolved-fouled",
    shop: "harrowvale",
    by: "marcus",
    final: "resolved",
    openedAt: -9 * DAY,
    draft: {
      vehicle: {
        vin: demoVin("Veltra", "VR1A8", 2017, 905),
        year: 2017,
        make: "Veltra",
        model: "Orvane",
        engine: "1.8 I4",
        fuel: "gasoline",
        mileage: 73400,
        mileageUnit: "mi",
        transmission: "cvt",
      },
      complaint: "Misfire on cold start for the first minute, cylinder 1; fine once warm.",
      codes: ["P0301"],
      system: "ignition",
      symptoms: ["misfire", "rough-idle"],
      conditions: { temperature: "cold", load: ["idle"], occurrence: "intermittent" },
      testsDone: "Coil swapped to cylinder 2: misfire stays on 1.",
      partsReplaced: "",
      notes: "Captures at cold idle.",
    },
    traces: () =>
      coilSet({
        seed: 800,
        cylinders: 4,
        faults: { 1: "fouled-plug" },
        sampleRateHz: 250_000,
        rpm: 800,
        events: 2,
        filePrefix: "orvane_cold",
      }),
    tier: "standard",
    paidAfter: 25,
    expert: "mira",
    claimedAfter: 60,
    answers: [
      {
        diagnosis: "Cylinder 1 fires at a low voltage with a long, low spark line: the spark is finding an easy path.",
        rootCause: "A fouled spark plug on cylinder 1 (carbon or oil on the insulator), worst when cold.",
        recommendedFix:
          "Replace the cylinder 1 plug and find why it fouls: check for oil in the plug well and the cylinder's fuel trim when cold.",
        testsToConfirm: "Read the old plug; a new capture at cold idle should match the other cylinders.",
      },
    ],
    answeredAfter: 140,
    confirmations: [
      { fixed: true, note: "Plug was oil-fouled; valve cover gasket leaking into the well. Both replaced.", rating: 4 },
    ],
  },

  // ---- closed: two answers, neither fixed it
  {
    key: "closed-unfixed",
    shop: "lantern",
    by: "sunita",
    final: "closed",
    openedAt: -20 * DAY,
    draft: {
      vehicle: {
        vin: demoVin("Astaro", "PL1C2", 2014, 321),
        year: 2014,
        make: "Astaro",
        model: "Pellow",
        engine: "1.2 I3",
        fuel: "gasoline",
        mileage: 88100,
        mileageUnit: "km",
        transmission: "manual",
      },
      complaint: "Random misfire at idle, all three cylinders, about once a minute.",
      codes: ["P0300"],
      system: "ignition",
      symptoms: ["misfire", "rough-idle"],
      conditions: { temperature: "any", load: ["idle"], occurrence: "intermittent" },
      testsDone: "New plugs. Coils swapped around: the misfire moves about at random.",
      partsReplaced: "Spark plugs.",
      notes: "",
    },
    traces: () =>
      coilSet({
        seed: 900,
        cylinders: 3,
        faults: {},
        sampleRateHz: 250_000,
        rpm: 800,
        events: 2,
        filePrefix: "pellow_idle",
      }),
    tier: "standard",
    paidAfter: 30,
    expert: "mira",
    claimedAfter: 90,
    answers: [
      {
        diagnosis: "The secondary patterns of the three coils match each other; nothing points at one coil.",
        rootCause: "A shared supply or ground of the coils dropping out for a moment.",
        recommendedFix:
          "Check the coil supply and ground under load: voltage drop across the ground strap and the coil fuse.",
        testsToConfirm: "Voltage drop test of the coil ground with the engine running, under 0.1 V.",
      },
      {
        diagnosis: "Still random with a good coil supply: the misfire follows no cylinder and no coil.",
        rootCause: "A lean condition at idle (a vacuum leak) can misfire any cylinder at random.",
        recommendedFix: "Smoke-test the intake and check the fuel trims at idle.",
        testsToConfirm: "Long-term fuel trim at idle within ±10 %.",
      },
    ],
    answeredAfter: 200,
    confirmations: [
      { fixed: false, note: "Ground strap was fine, 0.04 V drop. Still misfiring." },
      { fixed: false, note: "No vacuum leak found; trims normal. The customer took the car to the dealer." },
    ],
  },

  // ---- withdrawn: paid, then the shop found the fault itself before anyone claimed it
  {
    key: "withdrawn",
    shop: "cinderwick",
    by: "theo",
    final: "withdrawn",
    openedAt: -3 * DAY,
    draft: {
      vehicle: {
        vin: demoVin("Tovak", "KS2B0", 2019, 77),
        year: 2019,
        make: "Tovak",
        model: "Kestrow",
        engine: "2.0 I4",
        fuel: "gasoline",
        mileage: 40210,
        mileageUnit: "mi",
        transmission: "automatic",
      },
      complaint: "Intermittent no-start: cranks fine, no spark on any cylinder some mornings.",
      codes: ["P0335"],
      system: "ignition",
      symptoms: ["no-start"],
      conditions: { temperature: "cold", load: ["any"], occurrence: "intermittent" },
      testsDone: "Checked for spark with a tester: none when it fails.",
      partsReplaced: "",
      notes: "",
    },
    traces: () => [],
    tier: "standard",
    paidAfter: 15,
    withdrawnAfter: 45,
  },

  // ---- refunded by the desk: sent twice by mistake
  {
    key: "refunded",
    shop: "harrowvale",
    by: "marcus",
    final: "refunded",
    openedAt: -5 * DAY,
    draft: {
      vehicle: {
        vin: demoVin("Korrin", "ST2B4", 2016, 150),
        year: 2016,
        make: "Korrin",
        model: "Stratten",
        engine: "2.4 I4",
        fuel: "gasoline",
        mileage: 96700,
        mileageUnit: "mi",
        transmission: "automatic",
      },
      complaint: "Battery light flickers at idle and the battery is flat after two days.",
      codes: [],
      system: "starting-charging",
      symptoms: ["battery-drain"],
      conditions: { temperature: "any", load: ["idle"], occurrence: "intermittent" },
      testsDone: "Parasitic draw 35 mA after 40 minutes.",
      partsReplaced: "",
      notes: "",
    },
    traces: () => [],
    tier: "priority",
    paidAfter: 10,
    refundedAfter: 40,
    refundReason: "Submitted twice by mistake; the shop kept the other case.",
  },

  // ---- awaiting payment: the checkout was opened but not paid
  {
    key: "awaiting-payment",
    shop: "lantern",
    by: "sunita",
    final: "awaiting_payment",
    openedAt: -2 * HOUR,
    draft: {
      vehicle: {
        vin: demoVin("Meridane", "SV2H0", 2020, 402),
        year: 2020,
        make: "Meridane",
        model: "Solvane",
        engine: "2.0 I4 hybrid",
        fuel: "hybrid",
        mileage: 31500,
        mileageUnit: "mi",
        transmission: "cvt",
      },
      complaint: "Engine hesitates when it starts up during acceleration in hybrid mode.",
      codes: ["P0016"],
      system: "sensors",
      symptoms: ["hesitation", "check-engine-light-on"],
      conditions: { temperature: "any", load: ["cruise", "load"], occurrence: "intermittent" },
      testsDone: "Cam/crank correlation within limits at idle.",
      partsReplaced: "",
      notes: "",
    },
    traces: () => [],
    tier: "standard",
  },

  // ---- draft: a healthy crank capture and most of the form filled in, not yet submitted
  {
    key: "draft",
    shop: "cinderwick",
    by: "dana",
    final: "draft",
    openedAt: -25,
    draft: {
      vehicle: {
        vin: demoVin("Korrin", "LM1T5", 2021, 19),
        year: 2021,
        make: "Korrin",
        model: "Lumeo",
        engine: "1.5 I3 turbo",
        fuel: "gasoline",
        mileage: 22800,
        mileageUnit: "mi",
        transmission: "dct",
      },
      complaint: "Long crank when hot, then starts and runs fine.",
      codes: ["P0016"],
      system: "sensors",
      symptoms: ["hard-start"],
      conditions: { temperature: "hot", load: ["any"], occurrence: "intermittent" },
      testsDone: "",
      partsReplaced: "",
      notes: "Still to add: cam sensor capture on channel B.",
    },
    traces: () => [crankCapture(1100, null)],
  },
];
