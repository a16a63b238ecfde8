import type { DataRequest } from "../../../../shared/schemas/realtime";

const CAPTURE_NAMES: Record<DataRequest["capture"], string> = {
  "secondary-ignition": "Secondary ignition",
  "relative-compression": "Relative compression (cranking current)",
  injector: "Injector",
  crank: "Crank sensor",
  generic: "Other capture",
};

export const captureName = (c: DataRequest["capture"]) => CAPTURE_NAMES[c] ?? c;

/** 0.002 → "2 ms", 5e-5 → "50 µs", 1 → "1 s" (volts per division likewise in V/mV). */
export function formatSeconds(s: number): string {
  const a = Math.abs(s);
  const [v, u] = a >= 1 ? [s, "s"] : a >= 1e-3 ? [s * 1e3, "ms"] : [s * 1e6, "µs"];
  return `${Number(v.toPrecision(3))} ${u}`;
}
export function formatVolts(v: number): string {
  const a = Math.abs(v);
  const [x, u] = a >= 1000 ? [v / 1000, "kV"] : a >= 1 || a === 0 ? [v, "V"] : [v * 1000, "mV"];
  return `${Number(x.toPrecision(3))} ${u}`;
}

/** The parts of a request for more data, in reading order, e.g. ["Secondary ignition", "cylinder 4", "5 V/div", …]. */
export function requestParts(r: DataRequest): string[] {
  const out = [captureName(r.capture)];
  if (r.cylinder != null) out.push(`cylinder ${r.cylinder}`);
  const s = r.settings ?? {};
  if (s.probe)
    out.push(
      {
        "capacitive-secondary": "capacitive pickup",
        direct: "direct probe",
        x10: "×10 probe",
        "current-clamp": "current clamp",
      }[s.probe],
    );
  if (s.voltsPerDiv != null) out.push(`${formatVolts(s.voltsPerDiv)}/div`);
  if (s.timePerDivS != null) out.push(`${formatSeconds(s.timePerDivS)}/div`);
  if (s.triggerLevel != null || s.triggerSlope) {
    out.push(
      `trigger ${s.triggerSlope ?? ""}${s.triggerLevel != null ? ` at ${formatVolts(s.triggerLevel)}` : ""}`
        .replace(/\s+/g, " ")
        .trim(),
    );
  }
  if (s.triggerMode) out.push(`${s.triggerMode} trigger mode`);
  if (s.coupling) out.push(`${s.coupling.toUpperCase()} coupling`);
  if (s.kvPerVolt != null) out.push(`pickup ${s.kvPerVolt} kV per V`);
  return out;
}

/** One line for a notification or the queue's request-data message. */
export function describeRequest(r: DataRequest, text?: string): string {
  const line = requestParts(r).join(", ");
  const cond = r.conditions ? `; conditions: ${r.conditions}` : "";
  return `${line}${cond}${text ? `. ${text}` : ""}`;
}
