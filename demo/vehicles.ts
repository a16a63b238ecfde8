/**
 * Invented vehicles for the demo and a VIN maker. The VINs are structurally valid (17 characters,
 * no I/O/Q, model-year code in position 10 with a letter in position 7 for the 2010s cycle, check digit in position 9 computed by
 * shared/domain/vin.ts); their manufacturer prefixes end in 9 (the small-manufacturer form) and
 * stand for nobody.
 */
import { vinCheckDigit } from "../shared/domain/vin";

/** Model-year codes of position 10 for 2010–2024 (the 30-year cycle without I, O, Q, U, Z, 0). */
const YEAR_CODES: Record<number, string> = {
  2010: "A",
  2011: "B",
  2012: "C",
  2013: "D",
  2014: "E",
  2015: "F",
  2016: "G",
  2017: "H",
  2018: "J",
  2019: "K",
  2020: "L",
  2021: "M",
  2022: "N",
  2023: "P",
  2024: "R",
};

/** Invented manufacturer prefixes (positions 1–3) per invented make. */
const WMI: Record<string, string> = { Veltra: "5V9", Korrin: "KR9", Astaro: "WA9", Meridane: "SM9", Tovak: "3T9" };

/**
 * A VIN for an invented vehicle: WMI + 5 descriptor characters + check digit + year code +
 * plant + the small-manufacturer code and a 3-digit serial.
 */
export function demoVin(make: string, descriptor: string, year: number, serial: number): string {
  const wmi = WMI[make];
  if (!wmi) throw new Error(`no demo prefix for make ${make}`);
  if (!/^[A-HJ-NPR-Z0-9]{5}$/.test(descriptor)) throw new Error(`descriptor must be 5 VIN characters: ${descriptor}`);
  // position 7 (the descriptor's 4th character) is a letter for 2010 and later (49 CFR 565.15(b))
  if (!/[A-Z]/.test(descriptor[3]))
    throw new Error(`descriptor's 4th character must be a letter for a model year from 2010: ${descriptor}`);
  const yc = YEAR_CODES[year];
  if (!yc) throw new Error(`no year code for ${year}`);
  const tail =
    `A${"BCD"[serial % 3]}${String(serial % 100).padStart(2, "0")}${String(serial % 1000).padStart(3, "0")}`.slice(
      0,
      7,
    );
  const draft = `${wmi}${descriptor}0${yc}${tail}`;
  return draft.slice(0, 8) + vinCheckDigit(draft) + draft.slice(9);
}

/** Models and engines of the invented makes (used by the cases and the casebook). */
export const DEMO_MODELS: Record<string, { model: string; engines: string[]; years: [number, number] }[]> = {
  Veltra: [
    { model: "Tessary", engines: ["2.0 I4", "2.0 I4 turbo"], years: [2012, 2021] },
    { model: "Orvane", engines: ["1.8 I4", "2.5 I4"], years: [2011, 2020] },
    { model: "Halvick", engines: ["3.5 V6"], years: [2014, 2022] },
  ],
  Korrin: [
    { model: "Brisel", engines: ["1.6 I4", "1.4 I4 turbo"], years: [2010, 2019] },
    { model: "Lumeo", engines: ["1.5 I3 turbo", "1.5 I4 turbo"], years: [2016, 2024] },
    { model: "Stratten", engines: ["2.4 I4"], years: [2012, 2020] },
  ],
  Astaro: [
    { model: "Vennic", engines: ["1.4 I4 turbo", "2.0 I4 turbo"], years: [2013, 2023] },
    { model: "Pellow", engines: ["1.2 I3", "1.0 I3 turbo"], years: [2012, 2022] },
  ],
  Meridane: [
    { model: "Casselle", engines: ["2.4 I4", "3.0 V6"], years: [2010, 2019] },
    { model: "Solvane", engines: ["2.0 I4 hybrid", "2.5 I4"], years: [2015, 2024] },
  ],
  Tovak: [
    { model: "Ridgan", engines: ["2.5 I4", "5.3 V8"], years: [2010, 2021] },
    { model: "Kestrow", engines: ["1.6 I4", "2.0 I4"], years: [2013, 2023] },
    { model: "Bisrun", engines: ["6.2 V8", "3.6 V6"], years: [2011, 2022] },
  ],
};
