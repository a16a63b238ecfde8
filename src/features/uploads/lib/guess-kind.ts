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
  const words = fileName.toLowerCase().replace(/\.[a-z]+$/, "").split(/[^a-z]+/).filter(Boolean);
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

  // A sample of the values: median, spread and swings either side of the median.
  const v = ch.values;
  const stride = Math.max(1, Math.floor(v.length / 20000));
  const sample: number[] = [];
  for (let i = 0; i < v.length; i += stride) sample.push(v[i] * scale);
  const sorted = [...sample].sort((a, b) => a - b);
  const med = sorted[Math.floor(sorted.length / 2)] ?? 0;
  const devs = sample.map((x) => Math.abs(x - med)).sort((a, b) => a - b);
  const p90 = devs[Math.floor(devs.length * 0.9)] ?? 0;
  const maxDev = Math.max(hi - med, med - lo);
  // swings through ±30 % of the largest excursion (hysteresis, so noise never counts)
  const band = 0.3 * maxDev;
  let swings = 0;
  let side = 0;
  for (const x of sample) {
    const s = x > med + band ? 1 : x < med - band ? -1 : 0;
    if (s !== 0 && s !== side) {
      if (side !== 0) swings++;
      side = s;
    }
  }

  if (med >= 9 && med <= 16 && hi >= 2.5 * med) return { kind: "injector", reason: "battery voltage at rest with a spike far above it" };
  if (swings >= 40 && p90 > 0.2 * maxDev) return { kind: "crank", reason: "a steady run of swings either side of the middle" };
  if (maxDev > 0 && maxDev > 8 * p90) return { kind: "secondary-ignition", reason: "short tall spikes over a flat baseline" };
  return { kind: "generic", reason: "no typical shape recognised" };
}
