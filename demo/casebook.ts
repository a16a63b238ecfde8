/**
 * The demo casebook: about 200 resolved cases across the invented makes, their engines and the
 * systems of the desk, made from a set of fault stories (common trade knowledge, written for the
 * demo) combined with invented vehicles by a seeded generator, so every seed gives the same list.
 */
import type { AppContext } from "../server/context";
import type { CreatedUser } from "./builders/users";
import type { VehicleSystem } from "../shared/domain/case-status";
import { createRng } from "./builders/prng";
import { DEMO_MAKES } from "./people";
import { DEMO_MODELS } from "./vehicles";
import { insertCasebookEntries, type CasebookEntryInput } from "../server/services/casebook";
import { symptomLabels, type Symptom } from "../shared/schemas/case";
import { schema } from "../server/db/client";
import { count } from "drizzle-orm";

export interface DemoCasebookEntry {
  make: string;
  model: string;
  year: number;
  engine: string;
  system: VehicleSystem;
  codes: string[];
  symptoms: string[];
  complaint: string;
  diagnosis: string;
  rootCause: string;
  fix: string;
  testsToConfirm: string;
  /** the kind of capture that showed it */
  traceKind: string | null;
  /** the expert (person key) who answered */
  expert: string;
  /** days before seeding when it was resolved */
  resolvedDaysAgo: number;
  rating: number | null;
}

interface FaultStory {
  system: VehicleSystem;
  codes: (cyl: number) => string[];
  symptoms: string[];
  complaint: (cyl: number) => string;
  diagnosis: (cyl: number) => string;
  rootCause: (cyl: number) => string;
  fix: (cyl: number) => string;
  testsToConfirm: string;
  traceKind: string | null;
  /** only on engines whose name matches */
  engines?: RegExp;
}

const p030 = (cyl: number) => `P030${cyl}`;

const STORIES: FaultStory[] = [
  {
    system: "ignition",
    codes: (c) => [p030(c)],
    symptoms: ["misfire", "check-engine-light-flashing"],
    complaint: (c) => `Misfire on cylinder ${c} under load, flashing check-engine light.`,
    diagnosis: (c) => `Coil ${c}'s spark line is much shorter than the others and its firing line is low and uneven.`,
    rootCause: (c) => `Coil ${c} breaking down internally under load.`,
    fix: (c) => `Replace coil ${c}; check its boot and the plug well for carbon tracking.`,
    testsToConfirm: "Secondary capture under load after the repair: burn times within 10 % across coils.",
    traceKind: "secondary-ignition",
  },
  {
    system: "ignition",
    codes: (c) => [p030(c)],
    symptoms: ["misfire", "hesitation"],
    complaint: (c) => `Stumble under boost, cylinder ${c} misfire counter rising.`,
    diagnosis: (c) =>
      `High firing line and a short, high spark line on cylinder ${c}: the gap needs more voltage than the others.`,
    rootCause: (c) => `Worn spark plug on cylinder ${c}, gap opened up well past specification.`,
    fix: () => "Replace the plugs as a set, gapped to the manufacturer's specification.",
    testsToConfirm: "Firing lines within a few kV of each other at a steady 2000 rpm.",
    traceKind: "secondary-ignition",
  },
  {
    system: "ignition",
    codes: (c) => [p030(c)],
    symptoms: ["misfire", "rough-idle"],
    complaint: (c) => `Cold-start misfire on cylinder ${c} that clears when warm.`,
    diagnosis: (c) => `Low firing line with a long, low spark line on cylinder ${c} when cold.`,
    rootCause: (c) => `Fouled plug on cylinder ${c} (oil in the plug well from the valve cover gasket).`,
    fix: (c) => `Replace plug ${c} and the valve cover gasket; clean the well.`,
    testsToConfirm: "Cold idle secondary capture matching the other cylinders.",
    traceKind: "secondary-ignition",
  },
  {
    system: "ignition",
    codes: (c) => [p030(c), "P0351"],
    symptoms: ["misfire", "check-engine-light-on"],
    complaint: (c) => `Cylinder ${c} misfire with a coil circuit code.`,
    diagnosis: (c) => `No dwell on coil ${c}'s primary when the misfire happens; the others switch normally.`,
    rootCause: (c) => `Chafed coil ${c} trigger wire shorting to the bracket.`,
    fix: () => "Repair the harness and re-route it clear of the bracket.",
    testsToConfirm: "Wiggle test with the scope on the trigger wire, engine running.",
    traceKind: "generic",
  },
  {
    system: "ignition",
    codes: () => ["P0300"],
    symptoms: ["misfire", "rough-idle"],
    complaint: () => "Random misfire at idle on all cylinders.",
    diagnosis: () => "Coil ringing dies after one swing on every coil: the coils share a weak supply.",
    rootCause: () => "Corroded coil supply connector at the fuse box.",
    fix: () => "Clean or replace the connector terminals; check the voltage drop.",
    testsToConfirm: "Coil supply within 0.3 V of battery voltage with the engine running.",
    traceKind: "secondary-ignition",
  },
  {
    system: "fuel",
    codes: (c) => [p030(c), "P0172"],
    symptoms: ["rough-idle", "fuel-smell"],
    complaint: (c) => `Rough warm idle, cylinder ${c} misfire, fuel smell after shut-down.`,
    diagnosis: (c) => `Injector ${c}'s pintle-closing hump comes late compared with the others.`,
    rootCause: (c) => `Sticking injector ${c}, dripping after shut-down.`,
    fix: (c) => `Replace injector ${c} (and its seals).`,
    testsToConfirm:
      "Injector voltage captures with the hump at the same delay on every cylinder; fuel pressure holds after key-off.",
    traceKind: "injector",
  },
  {
    system: "fuel",
    codes: () => ["P0171", "P0174"],
    symptoms: ["hesitation", "rough-idle", "check-engine-light-on"],
    complaint: () => "Lean codes on both banks, hesitation when cold.",
    diagnosis: () => "Fuel trims high at idle, normal at 2500 rpm: unmetered air at idle.",
    rootCause: () => "Cracked intake boot after the air flow sensor.",
    fix: () => "Replace the intake boot and its clamps.",
    testsToConfirm: "Long-term trims within ±10 % at idle and at 2500 rpm.",
    traceKind: null,
    engines: /V6|V8/,
  },
  {
    system: "fuel",
    codes: () => ["P0087"],
    symptoms: ["loss-of-power", "hesitation"],
    complaint: () => "Loss of power at full load, fuel rail pressure low code.",
    diagnosis: () => "Rail pressure falls away from the request above 3000 rpm under load.",
    rootCause: () => "Worn low-pressure fuel pump not keeping up at high flow.",
    fix: () => "Replace the in-tank pump and the filter sock.",
    testsToConfirm: "Rail pressure follows the request under a full-load pull.",
    traceKind: null,
  },
  {
    system: "fuel",
    codes: (c) => [`P020${c}`],
    symptoms: ["misfire", "check-engine-light-on"],
    complaint: (c) => `Injector ${c} circuit code and a dead cylinder.`,
    diagnosis: (c) => `No turn-off spike on injector ${c}: the coil never carries current.`,
    rootCause: (c) => `Open winding in injector ${c}.`,
    fix: (c) => `Replace injector ${c}.`,
    testsToConfirm: "Turn-off spike on every injector within a few volts of each other.",
    traceKind: "injector",
  },
  {
    system: "sensors",
    codes: () => ["P0335", "P0336"],
    symptoms: ["stall", "hard-start"],
    complaint: () => "Stalls when hot, long crank afterwards; tachometer drops out.",
    diagnosis: () => "One tooth of the 60-2 wheel gives a much smaller signal in the same place each revolution.",
    rootCause: () => "Damaged tooth on the reluctor ring.",
    fix: () => "Replace the reluctor ring (or the part it is on) per the manufacturer's procedure.",
    testsToConfirm: "Even tooth amplitudes and 58 teeth between gaps at warm idle.",
    traceKind: "crank",
  },
  {
    system: "sensors",
    codes: () => ["P0016"],
    symptoms: ["hard-start", "check-engine-light-on"],
    complaint: () => "Cam/crank correlation code, hard start.",
    diagnosis: () => "Cam edges sit a constant few degrees late against the crank gap.",
    rootCause: () => "Timing chain stretched; tensioner at the end of its travel.",
    fix: () => "Replace the timing chain set per the manufacturer's procedure.",
    testsToConfirm: "Cam/crank capture with the edges at the reference position.",
    traceKind: "crank",
  },
  {
    system: "sensors",
    codes: () => ["P0340"],
    symptoms: ["no-start"],
    complaint: () => "Intermittent no-start, cam sensor circuit code.",
    diagnosis: () => "Cam sensor signal drops to zero while the 5 V reference stays.",
    rootCause: () => "Broken signal wire inside the loom near the engine mount.",
    fix: () => "Repair the wire with a sealed splice.",
    testsToConfirm: "Cam signal steady while the loom is flexed.",
    traceKind: "generic",
  },
  {
    system: "sensors",
    codes: () => ["P0101"],
    symptoms: ["hesitation", "poor-economy"],
    complaint: () => "Air flow sensor range code, poor economy.",
    diagnosis: () => "Air flow reading low against calculated load at every speed.",
    rootCause: () => "Contaminated air flow sensor element.",
    fix: () => "Replace the sensor; change the air filter.",
    testsToConfirm: "Air flow within the expected band at idle and 2500 rpm.",
    traceKind: "generic",
  },
  {
    system: "starting-charging",
    codes: () => [],
    symptoms: ["hard-start", "rough-idle"],
    complaint: () => "Uneven cranking and a rough cold idle.",
    diagnosis: () => "Relative compression: one cylinder's starter-current hump about 30 % down every cycle.",
    rootCause: () => "Exhaust valve not sealing on one cylinder.",
    fix: () => "Confirm with a compression gauge and leak-down, then repair the valve.",
    testsToConfirm: "Even starter-current humps while cranking.",
    traceKind: "relative-compression",
  },
  {
    system: "starting-charging",
    codes: () => [],
    symptoms: ["battery-drain"],
    complaint: () => "Battery flat after two days parked.",
    diagnosis: () => "Parasitic draw stays at 300 mA after the modules should sleep.",
    rootCause: () => "Glovebox light switch stuck on.",
    fix: () => "Replace the switch.",
    testsToConfirm: "Draw under 50 mA after the modules sleep.",
    traceKind: null,
  },
  {
    system: "starting-charging",
    codes: () => ["P0562"],
    symptoms: ["battery-drain", "stall"],
    complaint: () => "System voltage low code, battery light flickers at idle.",
    diagnosis: () => "Alternator ripple shows one diode's pulse missing.",
    rootCause: () => "Failed diode in the alternator rectifier.",
    fix: () => "Replace the alternator.",
    testsToConfirm: "Ripple under 0.5 V peak to peak at 2000 rpm with loads on.",
    traceKind: "generic",
  },
  {
    system: "starting-charging",
    codes: () => [],
    symptoms: ["no-start"],
    complaint: () => "Click and no crank some mornings.",
    diagnosis: () => "Starter draws no current while the battery voltage stays up.",
    rootCause: () => "Worn starter solenoid contacts.",
    fix: () => "Replace the starter motor.",
    testsToConfirm: "Cranking current capture with a clean inrush and even humps.",
    traceKind: "relative-compression",
  },
  {
    system: "engine-mechanical",
    codes: (c) => [p030(c)],
    symptoms: ["misfire", "rough-idle"],
    complaint: (c) => `Dead miss on cylinder ${c} at idle only.`,
    diagnosis: (c) => `Cylinder ${c}'s firing line low and its spark line flat: little compression to fire into.`,
    rootCause: (c) => `Burnt exhaust valve on cylinder ${c}.`,
    fix: () => "Cylinder head repair.",
    testsToConfirm: "Leak-down under 15 % on every cylinder.",
    traceKind: "secondary-ignition",
  },
  {
    system: "engine-mechanical",
    codes: () => ["P0011"],
    symptoms: ["rough-idle", "stall"],
    complaint: () => "Cam timing over-advanced code, stalls coming to a stop.",
    diagnosis: () => "Cam phaser does not return to its park position at idle.",
    rootCause: () => "Sticking oil control valve.",
    fix: () => "Replace the oil control valve; change the oil.",
    testsToConfirm: "Cam position follows the request during a snap test.",
    traceKind: null,
  },
  {
    system: "networks",
    codes: () => ["U0100"],
    symptoms: ["no-start", "check-engine-light-on"],
    complaint: () => "Lost communication with the engine module, intermittent no-start.",
    diagnosis: () => "CAN high drops out in bursts while CAN low stays; bus terminations measure right.",
    rootCause: () => "Corroded pin in the connector at the engine module.",
    fix: () => "Repair the terminal and seal the connector.",
    testsToConfirm: "Clean differential bus capture while flexing the harness.",
    traceKind: "generic",
  },
  {
    system: "networks",
    codes: () => ["U0121"],
    symptoms: ["check-engine-light-on"],
    complaint: () => "Brake module communication code after a battery change.",
    diagnosis: () => "The module answers only with the ignition held at start.",
    rootCause: () => "Blown fuse feeding the module's run circuit.",
    fix: () => "Replace the fuse; find the short on the run circuit.",
    testsToConfirm: "Module on the bus in run and crank.",
    traceKind: null,
  },
];

const EXPERT_FOR: Record<VehicleSystem, string[]> = {
  ignition: ["mira", "aurelio"],
  fuel: ["tomasz"],
  sensors: ["mira", "tomasz"],
  "starting-charging": ["ines"],
  "engine-mechanical": ["ines", "aurelio"],
  networks: ["tomasz", "mira"],
  other: ["ines"],
};

function cylindersOf(engine: string): number {
  const m = /([IV])(\d)/.exec(engine);
  return m ? Number(m[2]) : 4;
}

/** The deterministic list of demo casebook entries (default 200). */
export function demoCasebookEntries(n = 200, seed = 2718): DemoCasebookEntry[] {
  const rng = createRng(seed);
  const out: DemoCasebookEntry[] = [];
  let guard = 0;
  while (out.length < n && guard++ < n * 20) {
    const make = DEMO_MAKES[out.length % DEMO_MAKES.length];
    const m = rng.pick(DEMO_MODELS[make]);
    const engine = rng.pick(m.engines);
    const story = STORIES[(out.length * 7 + rng.int(0, STORIES.length - 1)) % STORIES.length];
    if (story.engines && !story.engines.test(engine)) continue;
    const cyl = rng.int(1, Math.min(8, cylindersOf(engine)));
    const year = rng.int(m.years[0], m.years[1]);
    const experts = EXPERT_FOR[story.system];
    out.push({
      make,
      model: m.model,
      year,
      engine,
      system: story.system,
      codes: story.codes(cyl),
      symptoms: story.symptoms,
      complaint: story.complaint(cyl),
      diagnosis: story.diagnosis(cyl),
      rootCause: story.rootCause(cyl),
      fix: story.fix(cyl),
      testsToConfirm: story.testsToConfirm,
      traceKind: story.traceKind,
      expert: experts[rng.int(0, experts.length - 1)],
      resolvedDaysAgo: rng.int(14, 400),
      rating: rng.next() < 0.8 ? rng.int(3, 5) : null,
    });
  }
  return out;
}

/** An entry as the casebook's bulk insert takes it (the text is already free of names). */
export function toCasebookInput(e: DemoCasebookEntry, expertId: string | null, now: Date): CasebookEntryInput {
  return {
    expertId,
    vehicle: {
      year: e.year,
      make: e.make,
      model: e.model,
      engine: e.engine,
      fuel: /hybrid/.test(e.engine) ? "hybrid" : "gasoline",
    },
    complaint: e.complaint,
    symptoms: e.symptoms.map((x) => symptomLabels[x as Symptom] ?? x),
    codes: e.codes,
    system: e.system,
    diagnosis: e.diagnosis,
    rootCause: e.rootCause,
    fix: e.fix,
    testsToConfirm: e.testsToConfirm,
    rating: e.rating,
    confirmed: true,
    publishedAt: new Date(now.getTime() - e.resolvedDaysAgo * 86_400_000),
  };
}

/**
 * Puts the demo entries into the casebook with its bulk insert (server/services/casebook.ts).
 * Returns how many entries the casebook holds afterwards: these plus the demo's own resolved
 * cases, which the app published itself when their fix was confirmed.
 */
export async function seedCasebook(ctx: AppContext, users: Record<string, CreatedUser>): Promise<number> {
  const now = ctx.now();
  const inputs = demoCasebookEntries().map((e) => toCasebookInput(e, users[e.expert]?.id ?? null, now));
  await insertCasebookEntries(ctx.db, inputs, { now });
  return (await ctx.db.read((tx) => tx.select({ n: count() }).from(schema.casebookEntry).get()))?.n ?? 0;
}
