import type { ProbeKind, TraceKind } from "../../../../shared/schemas/capture-settings";
import type { ParsedTrace } from "../../../../shared/trace/types";
import { guessKind as guessFromShape } from "../../../../shared/analysis/guess";

/**
 * A first guess at what a capture shows, from the file name, the probe and then the signal's shape
 * (shared/analysis/guess.ts). Only a suggestion: the tech picks the kind.
 */
export function guessKind(
  trace: ParsedTrace | null,
  fileName: string,
  probe?: ProbeKind,
): { kind: TraceKind; reason: string } {
  const words = fileName
    .toLowerCase()
    .replace(/\.[a-z]+$/, "")
    .split(/[^a-z]+/)
    .filter(Boolean);
  const has = (...ws: string[]) => words.some((w) => ws.some((x) => w === x || (x.length >= 5 && w.startsWith(x))));
  if (has("secondary", "spark", "coil", "cop", "ignition", "ign", "kv"))
    return { kind: "secondary-ignition", reason: "the file name mentions ignition" };
  if (has("injector", "inj")) return { kind: "injector", reason: "the file name mentions an injector" };
  if (has("crank", "ckp", "tooth", "teeth"))
    return { kind: "crank", reason: "the file name mentions the crank sensor" };
  if (has("compression", "starter", "cranking", "amps", "current"))
    return { kind: "relative-compression", reason: "the file name mentions starter current" };
  if (probe === "capacitive-secondary")
    return { kind: "secondary-ignition", reason: "taken with a capacitive secondary pickup" };
  if (probe === "current-clamp") return { kind: "relative-compression", reason: "taken with a current clamp" };
  if (!trace || !trace.channels[0]) return { kind: "secondary-ignition", reason: "the usual capture" };
  // Otherwise the waveform's shape, by the same rules the server's analysis uses.
  const g = guessFromShape({ probe }, trace);
  return { kind: g.kind, reason: g.reason };
}
