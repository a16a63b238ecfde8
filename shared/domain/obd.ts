/**
 * SAE J1979 (service 01) parameter decoders for the live data a technician may quote in a case.
 * A and B are the first and second data bytes of the response. Pure, browser-safe.
 *
 * Sources: PID 0C and PID 05 formulas — SAE J1979 as tabulated publicly (trade reference).
 * PIDs 04, 0D, 11 (and 0B, 0F) — SAE J1979 as tabulated publicly, from memory (not in the trade
 * reference).
 */

export interface PidValue {
  pid: number;
  name: string;
  value: number;
  unit: string;
}

function byte(v: number, name: string): number {
  if (!Number.isInteger(v) || v < 0 || v > 255)
    throw new RangeError(`${name} must be an integer byte 0–255, got ${v}.`);
  return v;
}

/** PID 04 calculated engine load: 100·A/255 % (SAE J1979, from memory). */
export function engineLoadPercent(a: number): number {
  return (100 * byte(a, "A")) / 255;
}

/** PID 05 engine coolant temperature: A − 40 °C (SAE J1979 as tabulated publicly). */
export function coolantTempC(a: number): number {
  return byte(a, "A") - 40;
}

/** PID 0B intake manifold absolute pressure: A kPa (SAE J1979, from memory). */
export function intakeManifoldPressureKpa(a: number): number {
  return byte(a, "A");
}

/** PID 0C engine speed: (256·A + B)/4 rpm (SAE J1979 as tabulated publicly). */
export function engineRpm(a: number, b: number): number {
  return (256 * byte(a, "A") + byte(b, "B")) / 4;
}

/** PID 0D vehicle speed: A km/h (SAE J1979, from memory). */
export function vehicleSpeedKmh(a: number): number {
  return byte(a, "A");
}

/** PID 0F intake air temperature: A − 40 °C (SAE J1979, from memory). */
export function intakeAirTempC(a: number): number {
  return byte(a, "A") - 40;
}

/** PID 11 absolute throttle position: 100·A/255 % (SAE J1979, from memory). */
export function throttlePercent(a: number): number {
  return (100 * byte(a, "A")) / 255;
}

interface PidDef {
  name: string;
  unit: string;
  bytes: 1 | 2;
  decode: (a: number, b: number) => number;
}

export const pidDefinitions: Readonly<Record<number, PidDef>> = {
  0x04: { name: "Calculated engine load", unit: "%", bytes: 1, decode: (a) => engineLoadPercent(a) },
  0x05: { name: "Engine coolant temperature", unit: "°C", bytes: 1, decode: (a) => coolantTempC(a) },
  0x0b: {
    name: "Intake manifold absolute pressure",
    unit: "kPa",
    bytes: 1,
    decode: (a) => intakeManifoldPressureKpa(a),
  },
  0x0c: { name: "Engine speed", unit: "rpm", bytes: 2, decode: (a, b) => engineRpm(a, b) },
  0x0d: { name: "Vehicle speed", unit: "km/h", bytes: 1, decode: (a) => vehicleSpeedKmh(a) },
  0x0f: { name: "Intake air temperature", unit: "°C", bytes: 1, decode: (a) => intakeAirTempC(a) },
  0x11: { name: "Throttle position", unit: "%", bytes: 1, decode: (a) => throttlePercent(a) },
};

/**
 * Decode one PID's data bytes. Throws RangeError for a PID not supported here or too few bytes.
 * Extra bytes are ignored.
 */
export function decodePid(pid: number, data: readonly number[]): PidValue {
  const def = pidDefinitions[pid];
  if (!def) throw new RangeError(`PID ${pid.toString(16).toUpperCase().padStart(2, "0")} is not supported.`);
  if (data.length < def.bytes)
    throw new RangeError(`PID ${pid.toString(16).toUpperCase().padStart(2, "0")} needs ${def.bytes} data byte(s).`);
  return { pid, name: def.name, unit: def.unit, value: def.decode(data[0], def.bytes === 2 ? data[1] : 0) };
}
