import { scopeSetting, type ChannelUnits } from "../../../lib/trace-units";

const probeNames: Record<string, string> = {
  "capacitive-secondary": "Capacitive pickup",
  direct: "Direct lead",
  x10: "10:1 lead",
  "current-clamp": "Current clamp",
};

function si(x: number, unit: string): string {
  const a = Math.abs(x);
  if (a >= 1e6) return `${Number((x / 1e6).toPrecision(3))} M${unit}`;
  if (a >= 1e3) return `${Number((x / 1e3).toPrecision(3))} k${unit}`;
  if (a >= 1 || a === 0) return `${Number(x.toPrecision(3))} ${unit}`;
  if (a >= 1e-3) return `${Number((x * 1e3).toPrecision(3))} m${unit}`;
  if (a >= 1e-6) return `${Number((x * 1e6).toPrecision(3))} µ${unit}`;
  return `${Number((x * 1e9).toPrecision(3))} n${unit}`;
}

/**
 * The capture settings of a trace as short chips: probe, scales, trigger, what it was on. Volts per
 * division and the trigger level are in the scope's unit (as typed on the scope), with the physical
 * value beside them when a probe scale applies (shared/trace/units scopeSetting).
 */
export function TraceSettingsSummary({
  settings,
  unit = "V",
  units,
}: {
  settings: Record<string, unknown>;
  unit?: string;
  units?: ChannelUnits;
}) {
  const s = settings as Record<string, number | string | boolean | undefined>;
  const chips: string[] = [];
  if (typeof s.probe === "string") {
    let p = probeNames[s.probe] ?? s.probe;
    if (s.probe === "capacitive-secondary" && typeof s.kvPerVolt === "number") p += ` (${s.kvPerVolt} kV/V)`;
    if (s.probe === "current-clamp" && typeof s.mvPerAmp === "number") p += ` (${s.mvPerAmp} mV/A)`;
    chips.push(p);
  }
  if (typeof s.voltsPerDiv === "number")
    chips.push(
      units ? scopeSetting(s.voltsPerDiv, units, "div") : `${Number(s.voltsPerDiv.toPrecision(3))} ${unit}/div`,
    );
  if (typeof s.timePerDivS === "number") chips.push(`${si(s.timePerDivS, "s")}/div`);
  if (typeof s.groundOffsetDiv === "number" && s.groundOffsetDiv !== 0)
    chips.push(`ground ${s.groundOffsetDiv > 0 ? "+" : ""}${s.groundOffsetDiv} div`);
  const trig = [
    typeof s.triggerSource === "string" ? `trigger ${s.triggerSource}` : "trigger",
    typeof s.triggerLevel === "number"
      ? units
        ? scopeSetting(s.triggerLevel, units)
        : `${s.triggerLevel} ${unit}`
      : null,
    typeof s.triggerSlope === "string" ? (s.triggerSlope === "falling" ? "falling" : "rising") : null,
    typeof s.triggerMode === "string" ? s.triggerMode : null,
  ].filter(Boolean);
  chips.push(trig.join(" · "));
  if (typeof s.coupling === "string") chips.push(s.coupling.toUpperCase());
  if (typeof s.sampleRateHz === "number") chips.push(`stated ${si(s.sampleRateHz, "S/s")}`);
  if (typeof s.circuit === "string" && s.circuit) chips.push(s.circuit);
  if (typeof s.sensor === "string" && s.sensor) chips.push(s.sensor);
  if (s.wasteSpark === true) chips.push("waste spark");
  return (
    <ul className="flex flex-wrap gap-1.5 text-xs" aria-label="Capture settings">
      {chips.map((c) => (
        <li key={c} className="rounded-full bg-ink-100 px-2 py-0.5 text-ink-700">
          {c}
        </li>
      ))}
    </ul>
  );
}
