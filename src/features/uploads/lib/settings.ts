import {
  captureSettingsSchema,
  type CaptureSettings,
  type ProbeKind,
  type TraceKind,
} from "../../../../shared/schemas/capture-settings";
import type { ParsedTrace } from "../../../../shared/trace/types";
import { step125 } from "./format";

export const timeUnits = { s: 1, ms: 1e-3, us: 1e-6 } as const;
export type TimeUnit = keyof typeof timeUnits;
export const rateUnits = { "S/s": 1, "kS/s": 1e3, "MS/s": 1e6 } as const;
export type RateUnit = keyof typeof rateUnits;

/** What the settings inputs hold: text for numbers ("" = not given). */
export interface SettingsDraft {
  kind: TraceKind;
  probe: ProbeKind;
  kvPerVolt: string;
  mvPerAmp: string;
  voltsPerDiv: string;
  timePerDiv: string;
  timeUnit: TimeUnit;
  triggerSource: string;
  triggerLevel: string;
  triggerMode: "auto" | "normal" | "single";
  triggerSlope: "rising" | "falling";
  groundOffsetDiv: string;
  coupling: "dc" | "ac";
  sampleRate: string;
  rateUnit: RateUnit;
  cylinder: string;
  coil: string;
  circuit: string;
  sensor: string;
  wasteSpark: boolean;
  everyCylinder: boolean;
  cylinders: string;
}

export type SettingsField = keyof CaptureSettings;

export const kindLabels: Record<TraceKind, string> = {
  "secondary-ignition": "Secondary ignition",
  "relative-compression": "Relative compression (starter current)",
  injector: "Injector voltage",
  crank: "Crank sensor (60-2 wheel)",
  generic: "Other / generic",
};

export const probeLabels: Record<ProbeKind, string> = {
  "capacitive-secondary": "Capacitive secondary pickup",
  direct: "Direct lead (1:1)",
  x10: "10:1 lead",
  "current-clamp": "Current clamp",
};

/** The probe usually used for each kind. */
const probeForKind: Record<TraceKind, ProbeKind> = {
  "secondary-ignition": "capacitive-secondary",
  "relative-compression": "current-clamp",
  injector: "direct",
  crank: "direct",
  generic: "direct",
};

/** A number in scope-knob form for an input ("0.001" rather than "1e-3"). */
const num = (x: number) => String(Number(x.toPrecision(6)));

/** Time/division that puts `durationS` on the ten divisions of the screen, as the inputs hold it. */
export function framingTime(durationS: number): { timePerDiv: string; timeUnit: TimeUnit } | null {
  if (!(Number.isFinite(durationS) && durationS > 0)) return null;
  const t = timeIn(step125(durationS / 10));
  return { timePerDiv: t.value, timeUnit: t.unit };
}

/** Another file's settings for this one, keeping what this file was connected to. */
export function copySettings(from: SettingsDraft, to: SettingsDraft): SettingsDraft {
  return { ...from, cylinder: to.cylinder, coil: to.coil, circuit: to.circuit, sensor: to.sensor };
}

/** The best time unit to show `seconds` in. */
function timeIn(seconds: number): { value: string; unit: TimeUnit } {
  if (seconds >= 1) return { value: num(seconds), unit: "s" };
  if (seconds >= 1e-3) return { value: num(seconds / 1e-3), unit: "ms" };
  return { value: num(seconds / 1e-6), unit: "us" };
}

export interface Guessed {
  draft: SettingsDraft;
  /** the fields filled from the file rather than left at the product's defaults */
  fromFile: (keyof SettingsDraft)[];
}

/**
 * Starting settings for a file: framing guessed from the preview (the whole capture on ten
 * divisions, the signal on eight), the kind guessed from the shape, and the usual defaults.
 */
export function initialSettings(trace: ParsedTrace | null, guessedKind: TraceKind, fileName: string): Guessed {
  const fromFile: (keyof SettingsDraft)[] = [];
  const kind = guessedKind;
  const draft: SettingsDraft = {
    kind,
    probe: probeForKind[kind],
    kvPerVolt: "",
    mvPerAmp: kind === "relative-compression" ? "1" : "",
    voltsPerDiv: "",
    timePerDiv: "",
    timeUnit: "ms",
    triggerSource: "A",
    triggerLevel: "",
    triggerMode: "auto",
    triggerSlope: "rising",
    groundOffsetDiv: "0",
    coupling: "dc",
    sampleRate: "",
    rateUnit: "MS/s",
    cylinder: "",
    coil: "",
    circuit: "",
    sensor: "",
    wasteSpark: false,
    everyCylinder: false,
    cylinders: "",
  };

  // "coil3.csv", "cyl_4.csv", "c2-trace.tsv" → that number as the cylinder
  const m = /(?:^|[^a-z])(cyl(?:inder)?|coil|c)[ _-]?(\d{1,2})(?!\d)/i.exec(fileName);
  if (m && Number(m[2]) >= 1 && Number(m[2]) <= 16) {
    const isCoil = m[1].toLowerCase() === "coil";
    if (isCoil) draft.coil = m[2];
    else draft.cylinder = m[2];
    fromFile.push(isCoil ? "coil" : "cylinder");
  }

  if (trace && trace.channels.length) {
    if (Number.isFinite(trace.durationS) && trace.durationS > 0) {
      const t = timeIn(step125(trace.durationS / 10));
      draft.timePerDiv = t.value;
      draft.timeUnit = t.unit;
      fromFile.push("timePerDiv");
    }
    const ch = trace.channels[0];
    const hi = Math.max(ch.max, 0);
    const lo = Math.min(ch.min, 0);
    if (hi > 0 && -lo <= 0.15 * hi) {
      // mostly above ground: ground one division from the bottom, seven divisions above it
      draft.groundOffsetDiv = "-3";
      draft.voltsPerDiv = num(step125(hi / 7));
    } else if (lo < 0 && hi <= 0.15 * -lo) {
      draft.groundOffsetDiv = "3";
      draft.voltsPerDiv = num(step125(-lo / 7));
    } else {
      draft.voltsPerDiv = num(step125(Math.max(hi, -lo) / 4));
    }
    fromFile.push("voltsPerDiv", "groundOffsetDiv");
    if (ch.name && /^[A-H]$/i.test(ch.name.replace(/^(channel|ch)\s*/i, ""))) {
      draft.triggerSource = ch.name.replace(/^(channel|ch)\s*/i, "").toUpperCase();
    }
    if (lo < 0 && -lo > hi) draft.triggerSlope = "falling";
  }
  return { draft, fromFile };
}

/** After a kind change: move the probe along when it still had the previous kind's usual probe. */
export function withKind(d: SettingsDraft, kind: TraceKind): SettingsDraft {
  const probe = d.probe === probeForKind[d.kind] ? probeForKind[kind] : d.probe;
  const mvPerAmp =
    probe === "current-clamp" && d.mvPerAmp === "" ? (kind === "relative-compression" ? "1" : "100") : d.mvPerAmp;
  return { ...d, kind, probe, mvPerAmp };
}

/**
 * A number typed into a settings field: "" → undefined (not given); decimal point or decimal comma
 * ("0.5", "0,5"); thousands commas in groups of three when unambiguous ("1,000,000", "1,000.5");
 * an optional exponent ("1e6"). "1,000" alone is refused with a hint: it reads as one thousand
 * with a thousands comma and as 1.000 with a decimal comma. Hexadecimal and other non-decimal
 * forms that Number() would take ("0x10") are refused.
 */
export function parseNumberInput(
  raw: string,
): { ok: true; value: number | undefined } | { ok: false; message: string } {
  const s = raw.trim();
  if (s === "") return { ok: true, value: undefined };
  const notNumber = { ok: false as const, message: "Enter a number." };
  let text: string;
  if (/^[-+]?[1-9]\d{0,2},\d{3}$/.test(s)) {
    const [whole, frac] = s.replace(/^[-+]/, "").split(",");
    return {
      ok: false,
      message: `“${s}” could be ${whole}${frac} or ${whole}.${frac}: write it without the comma (${whole}${frac}) or with a decimal point (${whole}.${frac}).`,
    };
  } else if (/^[-+]?[1-9]\d{0,2}(,\d{3})+(\.\d+)?$/.test(s)) {
    text = s.replace(/,/g, ""); // thousands commas: "1,000,000", "1,000.5"
  } else if (/^[-+]?\d*,\d+([eE][-+]?\d+)?$/.test(s)) {
    text = s.replace(",", "."); // decimal comma: "0,5", "12,50", "1,5e3"
  } else {
    text = s;
  }
  if (!/^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(text)) return notNumber;
  const value = Number(text);
  return Number.isFinite(value) ? { ok: true, value } : notNumber;
}

export type SettingsErrors = Partial<Record<SettingsField | "form", string>>;

/**
 * The settings as the API wants them (shared captureSettingsSchema), or the messages to show
 * beside each field. `needsRate`: the file has no time column, so the sample rate is required.
 */
export function toCaptureSettings(
  d: SettingsDraft,
  needsRate: boolean,
): { ok: true; settings: CaptureSettings } | { ok: false; errors: SettingsErrors } {
  const errors: SettingsErrors = {};
  const numbers: Partial<Record<SettingsField, number | undefined>> = {};
  const read = (field: SettingsField, raw: string, scale = 1) => {
    const r = parseNumberInput(raw);
    if (!r.ok) {
      errors[field] = r.message;
      numbers[field] = undefined;
      return;
    }
    numbers[field] = r.value === undefined ? undefined : r.value * scale;
  };
  read("kvPerVolt", d.probe === "capacitive-secondary" ? d.kvPerVolt : "");
  read("mvPerAmp", d.probe === "current-clamp" ? d.mvPerAmp : "");
  read("voltsPerDiv", d.voltsPerDiv);
  read("timePerDivS", d.timePerDiv, timeUnits[d.timeUnit]);
  read("triggerLevel", d.triggerLevel);
  read("groundOffsetDiv", d.groundOffsetDiv);
  read("sampleRateHz", d.sampleRate, rateUnits[d.rateUnit]);
  read("cylinder", d.cylinder);
  read("coil", d.coil);
  read("cylinders", d.cylinders);

  if (numbers.voltsPerDiv === undefined && !errors.voltsPerDiv)
    errors.voltsPerDiv = "Enter the volts per division the scope was set to.";
  if (numbers.timePerDivS === undefined && !errors.timePerDivS)
    errors.timePerDivS = "Enter the time per division the scope was set to.";
  if (needsRate && numbers.sampleRateHz === undefined && !errors.sampleRateHz)
    errors.sampleRateHz = "This file has no time column: enter the sample rate it was recorded at.";
  if (d.probe === "current-clamp" && numbers.mvPerAmp === undefined && !errors.mvPerAmp)
    errors.mvPerAmp = "Enter the clamp's scale in millivolts per ampere (printed on the clamp or its range switch).";

  const candidate = {
    kind: d.kind,
    probe: d.probe,
    kvPerVolt: numbers.kvPerVolt,
    mvPerAmp: numbers.mvPerAmp,
    voltsPerDiv: numbers.voltsPerDiv,
    timePerDivS: numbers.timePerDivS,
    triggerSource: d.triggerSource.trim() || "A",
    triggerLevel: numbers.triggerLevel,
    triggerMode: d.triggerMode,
    triggerSlope: d.triggerSlope,
    groundOffsetDiv: numbers.groundOffsetDiv ?? 0,
    coupling: d.coupling,
    sampleRateHz: numbers.sampleRateHz,
    cylinder: numbers.cylinder,
    coil: numbers.coil,
    circuit: d.circuit.trim() || undefined,
    sensor: d.sensor.trim() || undefined,
    wasteSpark: d.kind === "secondary-ignition" && !d.everyCylinder ? d.wasteSpark : false,
    everyCylinder: d.kind === "secondary-ignition" ? d.everyCylinder : false,
    cylinders: numbers.cylinders,
  };
  for (const k of Object.keys(candidate) as (keyof typeof candidate)[])
    if (candidate[k] === undefined) delete candidate[k];

  const r = captureSettingsSchema.safeParse(candidate);
  if (!r.success) {
    for (const issue of r.error.issues) {
      const f = String(issue.path[0] ?? "form") as SettingsField | "form";
      if (!errors[f]) errors[f] = friendly(f, issue.message);
    }
  }
  if (Object.keys(errors).length) return { ok: false, errors };
  return { ok: true, settings: (r as { data: CaptureSettings }).data };
}

function friendly(field: SettingsField | "form", message: string): string {
  switch (field) {
    case "groundOffsetDiv":
      return "The ground offset is between −4 and +4 divisions from the centre.";
    case "cylinder":
    case "coil":
    case "cylinders":
      return "Enter a whole number from 1 to 16.";
    case "voltsPerDiv":
    case "timePerDivS":
    case "sampleRateHz":
    case "kvPerVolt":
    case "mvPerAmp":
      return "Enter a positive number.";
    default:
      return message;
  }
}
