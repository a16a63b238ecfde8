/**
 * Generic descriptions of common SAE J2012 powertrain codes, written in our own words.
 * Meanings follow public generic code lists (from memory; public lists agree, with small wording
 * differences). Manufacturer-specific meanings are not covered: a well-formed code that is not in
 * this table is kept without a description.
 */

const table: Record<string, string> = {};

function add(code: string, description: string): void {
  table[code] = description;
}

/** Five-code sensor block: circuit, range/performance, low, high, intermittent. */
function sensorBlock(first: number, sensor: string): void {
  const parts = [
    `${sensor} circuit fault`,
    `${sensor} reading out of expected range or performance`,
    `${sensor} circuit input low`,
    `${sensor} circuit input high`,
    `${sensor} circuit intermittent or erratic`,
  ];
  parts.forEach((text, i) => add(pcode(first + i), text));
}

/** P-code from its decimal digits: 130 → "P0130". Every range in this table is decimal. */
function pcode(n: number): string {
  return "P" + String(n).padStart(4, "0");
}

// Variable valve timing and cam/crank agreement (bank 1 intake "A" camshaft unless said otherwise)
add("P0010", "Intake camshaft timing actuator circuit fault, bank 1");
add("P0011", "Intake camshaft timing more advanced than commanded, or the timing system is slow to follow, bank 1");
add("P0012", "Intake camshaft timing more retarded than commanded, bank 1");
add("P0013", "Exhaust camshaft timing actuator circuit fault, bank 1");
add("P0014", "Exhaust camshaft timing more advanced than commanded, or the timing system is slow to follow, bank 1");
add("P0016", "Crankshaft and camshaft position signals disagree, bank 1 (intake camshaft sensor)");
add("P0017", "Crankshaft and camshaft position signals disagree, bank 1 (exhaust camshaft sensor)");
add("P0018", "Crankshaft and camshaft position signals disagree, bank 2 (intake camshaft sensor)");

// Fuel pressure
add("P0087", "Fuel rail or system pressure lower than expected");
add("P0088", "Fuel rail or system pressure higher than expected");

// Fuel and air metering sensors
sensorBlock(100, "Mass air flow (MAF) sensor");
sensorBlock(105, "Manifold absolute pressure (MAP) / barometric pressure sensor");
sensorBlock(110, "Intake air temperature (IAT) sensor");
sensorBlock(115, "Engine coolant temperature (ECT) sensor");
sensorBlock(120, "Throttle position sensor (TPS) A");
add("P0125", "Coolant takes too long to reach the temperature needed for closed-loop fuel control");
add("P0128", "Coolant temperature stays below the thermostat's regulating temperature");

// Oxygen sensors: bank/sensor position, then circuit, low, high, slow, no activity, heater
const o2 = [
  { first: 130, where: "bank 1 sensor 1" },
  { first: 136, where: "bank 1 sensor 2" },
  { first: 150, where: "bank 2 sensor 1" },
  { first: 156, where: "bank 2 sensor 2" },
];
for (const { first, where } of o2) {
  const n = first;
  add(pcode(n), `Oxygen sensor circuit fault, ${where}`);
  add(pcode(n + 1), `Oxygen sensor voltage stays low, ${where}`);
  add(pcode(n + 2), `Oxygen sensor voltage stays high, ${where}`);
  add(pcode(n + 3), `Oxygen sensor switches too slowly, ${where}`);
  add(pcode(n + 4), `Oxygen sensor shows no activity, ${where}`);
  add(pcode(n + 5), `Oxygen sensor heater circuit fault, ${where}`);
}

// Fuel trim
add("P0171", "Fuel system running too lean, bank 1");
add("P0172", "Fuel system running too rich, bank 1");
add("P0174", "Fuel system running too lean, bank 2");
add("P0175", "Fuel system running too rich, bank 2");

// Injector circuits
add("P0200", "Fuel injector circuit fault");
for (let cyl = 1; cyl <= 12; cyl++) {
  add(pcode(200 + cyl), `Fuel injector circuit fault, cylinder ${cyl}`);
}

// Misfire
add("P0300", "Misfire detected in several cylinders or at random");
for (let cyl = 1; cyl <= 12; cyl++) {
  add(misfireCode(cyl), `Misfire detected in cylinder ${cyl}`);
}

// Knock sensors
sensorBlock(325, "Knock sensor 1 (bank 1 or single sensor)");
sensorBlock(330, "Knock sensor 2 (bank 2)");

// Crank and cam position
sensorBlock(335, "Crankshaft position sensor A");
sensorBlock(340, "Camshaft position sensor A (bank 1 or single sensor)");

// Ignition coils: the letter-to-cylinder mapping is the maker's
add("P0350", "Ignition coil primary or secondary circuit fault");
const COIL_LETTERS = "ABCDEFGHIJKL";
for (let i = 0; i < 12; i++) {
  add(
    coilCode(i),
    `Ignition coil ${COIL_LETTERS[i]} primary or secondary circuit fault (which cylinder coil ${COIL_LETTERS[i]} serves is the maker's assignment)`,
  );
}

// Exhaust gas recirculation
add("P0400", "Exhaust gas recirculation (EGR) flow fault");
add("P0401", "EGR flow lower than expected");
add("P0402", "EGR flow higher than expected");
add("P0403", "EGR control circuit fault");
add("P0404", "EGR circuit reading out of expected range or performance");

// Catalyst
add("P0420", "Catalytic converter efficiency below threshold, bank 1");
add("P0430", "Catalytic converter efficiency below threshold, bank 2");

// Evaporative emission system
add("P0440", "Evaporative emission (EVAP) system fault");
add("P0441", "EVAP purge flow not as expected");
add("P0442", "EVAP system small leak detected");
add("P0443", "EVAP purge control valve circuit fault");
add("P0444", "EVAP purge control valve circuit open");
add("P0445", "EVAP purge control valve circuit shorted");
add("P0446", "EVAP vent control circuit fault");
add("P0447", "EVAP vent control circuit open");
add("P0448", "EVAP vent control circuit shorted");
add("P0449", "EVAP vent valve or solenoid circuit fault");
add("P0450", "EVAP pressure sensor circuit fault");
add("P0451", "EVAP pressure sensor reading out of expected range or performance");
add("P0452", "EVAP pressure sensor input low");
add("P0453", "EVAP pressure sensor input high");
add("P0454", "EVAP pressure sensor intermittent");
add("P0455", "EVAP system large leak detected");
add("P0456", "EVAP system very small leak detected");

// Speed and idle
add("P0500", "Vehicle speed sensor A fault");
add("P0505", "Idle air control system fault");
add("P0506", "Idle speed lower than expected");
add("P0507", "Idle speed higher than expected");

// Supply voltage seen by the engine control module
add("P0560", "System (supply) voltage fault");
add("P0562", "System (supply) voltage lower than expected");
add("P0563", "System (supply) voltage higher than expected");

/** Misfire code for a cylinder 1–12: P0301…P0309, P0310, P0311, P0312 (decimal, not hexadecimal). */
export function misfireCode(cylinder: number): string {
  return "P03" + String(cylinder).padStart(2, "0");
}

/** Coil circuit code for coil index 0–11 (A–L): P0351…P0359, P0360, P0361, P0362. */
function coilCode(index: number): string {
  return "P03" + String(51 + index);
}

/** Code → generic description, frozen. */
export const dtcDescriptions: Readonly<Record<string, string>> = Object.freeze(table);

/** The coil letter (A–L) of a coil circuit code P0351–P0362, else undefined. */
export function coilLetterOf(code: string): string | undefined {
  const m = /^P03(5[1-9]|6[0-2])$/.exec(code);
  return m ? COIL_LETTERS[Number(m[1]) - 51] : undefined;
}
