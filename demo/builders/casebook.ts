/**
 * Synthetic casebook entries for the demo seed, the tests and the benchmark: invented makes and models,
 * plausible ignition/fuel/sensor stories, trouble codes, and waveform patterns (an odd coil, or
 * even coils), all from a seeded PRNG (same seed → same entries). Already anonymised: they go
 * straight to insertCasebookEntries.
 */
import type { CasebookEntryInput } from "../../server/services/anonymise";
import { FEATURE_VERSION, type CasePattern, type OddFact } from "../../server/services/similar";
import { createRng, type Rng } from "./prng";

/** Invented vehicle makes and their models (no real brands). */
export const CASEBOOK_MAKES: Record<string, string[]> = {
  Veltra: ["Quillon", "Lumen", "Linden", "Ardent"],
  Korrin: ["Dune", "Vale", "Ridge"],
  Astaro: ["Talus", "Ostrel", "Fjord", "Tessel"],
  Marlec: ["Caddow", "Cinder"],
  Oruna: ["Tide", "Sorrel", "Wrenlow"],
  Pellan: ["Arc", "Nimbus"],
};
export const CASEBOOK_ENGINES = [
  "1.0 I3",
  "1.4 I4",
  "1.6 I4",
  "2.0 I4",
  "2.0 I4 turbo",
  "2.5 I5",
  "3.0 V6",
  "3.5 V6",
  "5.0 V8",
];
const SYSTEMS = ["ignition", "fuel", "sensors", "starting-charging", "engine-mechanical"] as const;

/** Stories per system: [complaint, diagnosis, root cause, fix]; "#" is a cylinder number. */
const STORIES: Record<(typeof SYSTEMS)[number], [string, string, string, string][]> = {
  ignition: [
    [
      "Misfire under load on cylinder #",
      "Burn time on coil # is short against the others and the spark line rises steeply: the coil is breaking down under load.",
      "Coil # secondary winding breakdown",
      "Replace ignition coil # and check the plug well for moisture.",
    ],
    [
      "Rough idle when cold, flashing check-engine light",
      "Firing line on cylinder # is very high with a short burn: a worn plug with a wide gap.",
      "Spark plug # gap worn wide",
      "Replace the spark plugs, gapped to the maker's figure.",
    ],
    [
      "Intermittent misfire in wet weather",
      "Secondary on coil # shows the spark tracking to ground through a cracked boot; the misfire follows the boot.",
      "Cracked coil boot on cylinder #",
      "Replace the coil boot and dry the plug well.",
    ],
    [
      "Stalls at idle after warm-up",
      "Coil ringing on coil # is missing after the spark line: shorted turns in the primary.",
      "Coil # shorted primary turns",
      "Replace coil # and recheck dwell.",
    ],
  ],
  fuel: [
    [
      "Hesitation on acceleration",
      "Injector # pulse lacks the pintle-closing hump: the injector sticks.",
      "Sticking injector #",
      "Replace injector # and clear adaptations.",
    ],
    [
      "Lean codes at idle, poor economy",
      "Relative fuel trims high at idle only; smoke test found an intake leak behind the manifold.",
      "Intake manifold gasket leak",
      "Replace the intake manifold gasket.",
    ],
    [
      "Hard start after a hot soak",
      "Fuel pressure bleeds down within minutes; the check valve leaks.",
      "Fuel pump check valve leaking",
      "Replace the fuel pump module.",
    ],
  ],
  sensors: [
    [
      "No start when hot, restarts when cool",
      "Crank sensor signal amplitude collapses when hot; missing teeth pattern lost.",
      "Crank position sensor failing hot",
      "Replace the crank position sensor and check the air gap.",
    ],
    [
      "Erratic idle, throttle hunting",
      "Cam sensor signal drops out intermittently; the connector is corroded.",
      "Corroded cam sensor connector",
      "Repair the connector and protect it with dielectric grease.",
    ],
  ],
  "starting-charging": [
    [
      "Slow cranking in the morning",
      "Cranking current and relative compression are even; battery fails a load test.",
      "Battery internal failure",
      "Replace the battery and test the charging voltage.",
    ],
    [
      "Battery drain overnight",
      "Parasitic draw traced to a module that stays awake on the network.",
      "Body module not sleeping",
      "Update or replace the body module.",
    ],
  ],
  "engine-mechanical": [
    [
      "Misfire on cylinder # with no ignition fault",
      "Relative compression shows cylinder # low; leak-down confirms an exhaust valve.",
      "Burnt exhaust valve on cylinder #",
      "Repair the cylinder head valve on cylinder #.",
    ],
    [
      "Ticking noise and misfire when cold",
      "Relative compression low on cylinder #; the lifter collapses cold.",
      "Collapsed lifter on cylinder #",
      "Replace the lifter and the oil.",
    ],
  ],
};

const FILLER = [
  "Checked the wiring harness for chafing along the engine.",
  "Scope captures taken at idle and at 2500 rpm.",
  "Customer reports it happens after long motorway runs.",
  "Freeze frame shows the fault at operating temperature.",
  "Tried a known good part from stock first.",
  "Smoke test and visual inspection done.",
  "The fault returned after clearing codes.",
  "Live data compared with a known good vehicle.",
];

const CODES: Record<(typeof SYSTEMS)[number], string[]> = {
  ignition: ["P0300", "P0301", "P0302", "P0303", "P0304", "P0351", "P0352", "P0353", "P0354"],
  fuel: ["P0171", "P0172", "P0201", "P0202", "P0203", "P0087"],
  sensors: ["P0335", "P0340", "P0341", "P0016"],
  "starting-charging": ["P0562", "P0620"],
  "engine-mechanical": ["P0301", "P0302", "P0303", "P0304", "P0300"],
};

/** A waveform pattern: either one odd coil (burn short, firing line high …) or even coils. */
export function syntheticPattern(
  rng: Rng,
  opts: { oddCoil?: number; burnMs?: number; oddBurnMs?: number; rpm?: number; cylinders?: number } = {},
): CasePattern {
  const cylinders = opts.cylinders ?? rng.pick([4, 4, 4, 6]);
  const burn = opts.burnMs ?? Math.round(rng.range(1.1, 1.9) * 100) / 100;
  const odd: OddFact[] = [];
  const oddCoil = opts.oddCoil ?? (rng.next() < 0.6 ? rng.int(1, cylinders) : 0);
  if (oddCoil > 0) {
    const oddBurn = opts.oddBurnMs ?? Math.round(burn * rng.range(0.3, 0.7) * 100) / 100;
    odd.push({
      metric: "burnTimeMs",
      label: `coil ${oddCoil}`,
      value: oddBurn,
      others: burn,
      unit: "ms",
      ratio: oddBurn / burn,
    });
    const pk = rng.range(1.2, 1.8);
    odd.push({
      metric: "peak",
      label: `coil ${oddCoil}`,
      value: Math.round(9 * pk * 10) / 10,
      others: 9,
      unit: "kV",
      ratio: pk,
    });
  } else {
    const r = rng.range(0.93, 1.07);
    odd.push({
      metric: "burnTimeMs",
      label: `coil ${rng.int(1, cylinders)}`,
      value: Math.round(burn * r * 100) / 100,
      others: burn,
      unit: "ms",
      ratio: r,
    });
  }
  return {
    version: FEATURE_VERSION,
    kinds: ["secondary-ignition"],
    compared: cylinders,
    rpm: opts.rpm ?? Math.round(rng.range(650, 3000)),
    burnTimeMs: burn,
    oscillations: rng.int(2, 5),
    odd,
    findings: rng.next() < 0.15 ? ["erratic-firing"] : [],
    lowCompression: null,
  };
}

/** One synthetic entry. `dense` adds filler sentences (longer text, like a detailed write-up). */
export function syntheticEntry(
  rng: Rng,
  i: number,
  opts: { dense?: boolean; baseTime?: number; withPattern?: boolean } = {},
): CasebookEntryInput {
  const make = rng.pick(Object.keys(CASEBOOK_MAKES));
  const model = rng.pick(CASEBOOK_MAKES[make]);
  const system = rng.pick(SYSTEMS);
  const story = rng.pick(STORIES[system]);
  const cyl = String(rng.int(1, 6));
  const fill = (s: string) => s.replace(/#/g, cyl);
  const extra = opts.dense ? Array.from({ length: rng.int(3, 7) }, () => rng.pick(FILLER)).join(" ") : "";
  const codes = [...new Set(Array.from({ length: rng.int(0, 3) }, () => rng.pick(CODES[system])))];
  const year = rng.int(1998, 2024);
  return {
    vehicle: {
      year,
      make,
      model,
      engine: rng.pick(CASEBOOK_ENGINES),
      fuel: rng.pick(["gasoline", "gasoline", "diesel", "hybrid"]),
      transmission: rng.pick(["automatic", "manual"]),
      mileage: rng.int(10, 300) * 1000,
      mileageUnit: "km",
    },
    complaint: fill(story[0]) + "." + (extra ? ` ${extra}` : ""),
    symptoms: system === "ignition" ? ["Misfire"] : [],
    codes,
    system,
    testsDone: opts.dense ? rng.pick(FILLER) : "",
    diagnosis: fill(story[1]) + (extra ? ` ${rng.pick(FILLER)}` : ""),
    rootCause: fill(story[2]),
    fix: fill(story[3]),
    testsToConfirm: "Recapture after the repair and compare with the other cylinders.",
    rating: rng.int(3, 5),
    confirmed: rng.next() < 0.85,
    pattern: opts.withPattern === false ? null : system === "ignition" ? syntheticPattern(rng) : null,
    publishedAt: new Date((opts.baseTime ?? Date.UTC(2025, 0, 1)) + i * 3_600_000),
  };
}

/** `n` entries from `seed` (the demo seed publishes ~200 of these with insertCasebookEntries). */
export function syntheticEntries(
  n: number,
  seed = 7,
  opts: { dense?: boolean; withPattern?: boolean } = {},
): CasebookEntryInput[] {
  const rng = createRng(seed);
  return Array.from({ length: n }, (_, i) => syntheticEntry(rng, i, opts));
}
