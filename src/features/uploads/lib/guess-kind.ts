import type { ProbeKind, TraceKind } from "../../../../shared/schemas/capture-settings";
import type { ParsedTrace } from "../../../../shared/trace/types";

/**
 * A first guess at what a capture shows, from the file name, the probe and the signal's shape.
 * Only a suggestion: the tech picks the kind. Rules of thumb (common practice, no source):
 * secondary ignition reaches kilovolts (or is taken with a capacitive pickup); a saturated
 * injector sits near battery voltage with a turn-off spike far above it; a crank sensor swings
 * both sides of zero many times; starter current is taken with a clamp over a second or more.
 */
export function guessKind(trace: ParsedTrace | null, fileName: string, probe?: ProbeKind): { kind: TraceKind; reason: string } {
  const words = fileName.toLowerCase().replace(/\.[a-z]+$/, "").split(/[^a-z0-9]+/).filter(Boolean);
  const has = (...ws: string[]) => words.some((w) => ws.some((x) => w === x || (x.length >= 5 && w.startsWith(x))));
  if (has("secondary", "spark", "coil", "cop", "ignition", "ign", "kv")) return { kind: "secondary-ignition", reason: "the file name mentions ignition" };
  if (has("injector", "inj")) return { kind: "injector", reason: "the file name mentions an injector" };
  if (has("crank", "ckp", "tooth", "teeth")) return { kind: "crank", reason: "the file name mentions the crank sensor" };
  if (has("compression", "starter", "cranking", "amps", "current")) return { kind: "relative-compression", reason: "the file name mentions starter current" };
  if (probe === "capacitive-secondary") return { kind: "secondary-ignition", reason: "taken with a capacitive secondary pickup" };
  if (probe === "current-clamp") return { kind: "relative-compression", reason: "taken with a current clamp" };
  const ch = trace?.channels[0];
  if (!trace || !ch) return { kind: "secondary-ignition", reason: "the usual capture" };

  const unit = (ch.unit ?? "V").toLowerCase();
  const scale = unit === "kv" ? 1000 : unit === "mv" ? 0.001 : 1;
  const hi = ch.max * scale;
  const lo = ch.min * scale;
  if (unit === "a" || unit === "ma") return { kind: "relative-compression", reason: "the file is in amperes" };
  if (Math.max(hi, -lo) >= 1000) return { kind: "secondary-ignition", reason: "the signal reaches kilovolts" };

  // Median of a sample of values, and zero crossings.
  const v = ch.values;
  const stride = Math.max(1, Math.floor(v.length / 4000));
  const sample: number[] = [];
  for (let i = 0; i < v.length; i += stride) sample.push(v[i] * scale);
  sample.sort((a, b) => a - b);
  const med = sample[Math.floor(sample.length / 2)] ?? 0;
  let crossings = 0;
  for (let i = stride; i < v.length; i += stride) if (v[i - stride] < 0 !== v[i] < 0) crossings++;

  if (med >= 9 && med <= 16 && hi >= 2.5 * med) return { kind: "injector", reason: "battery voltage at rest with a spike far above it" };
  if (crossings >= 60 && Math.abs(med) < 0.2 * Math.max(hi, -lo)) return { kind: "crank", reason: "many swings either side of zero" };
  if (hi >= 100) return { kind: "secondary-ignition", reason: "tall spikes over a low baseline" };
  return { kind: "generic", reason: "no typical shape recognised" };
}
