import type { CaptureSettings, TraceKind } from "../schemas/capture-settings";
import { channelInput, type AnalyzableTrace } from "./analyze";
import { measurePrepared } from "./measure";
import { prepare } from "./signal";
import { blockSample, histogramQuantile, robustLevelAndNoise } from "./stats";

export interface KindGuess {
  kind: TraceKind;
  /** what the guess rests on */
  from: "settings" | "shape" | "default";
  reason: string;
}

const WORDS: [RegExp, TraceKind, string][] = [
  [/\b(crank|ckp|reluctor|60-2|flywheel)/i, "crank", "crank sensor"],
  [/\binject/i, "injector", "injector"],
  [/\b(starter|compression|cranking current|battery cable)/i, "relative-compression", "starter current"],
  [/\b(spark|plug|secondary|ignition coil|coil[- ]on[- ]plug|cop\b|kv\b)/i, "secondary-ignition", "ignition secondary"],
];

/**
 * A kind to offer the uploader: from what the channel was connected to (the settings' circuit or
 * sensor text), else from the waveform's shape, else from the probe, else generic. The uploader
 * still picks; settings.kind (their pick) is not looked at.
 */
export function guessKind(settings: Partial<CaptureSettings>, trace: AnalyzableTrace): KindGuess {
  const text = `${settings.sensor ?? ""} ${settings.circuit ?? ""}`;
  for (const [re, kind, what] of WORDS) {
    if (re.test(text))
      return { kind, from: "settings", reason: `the channel was connected to the ${what} ("${text.trim()}")` };
  }
  const input = channelInput(trace, 0);
  const p = prepare(input);
  if (p.n >= 16 && p.max > p.min) {
    const { median: med, noise } = robustLevelAndNoise(p.v);
    const q995 = histogramQuantile(p.v, 0.995, p.min, p.max);
    const q005 = histogramQuantile(p.v, 0.005, p.min, p.max);
    const sampled = blockSample(p.v);
    const q01 = histogramQuantile(sampled, 0.01, p.min, p.max);
    const q99 = histogramQuantile(sampled, 0.99, p.min, p.max);
    const k = p.toPhysical;
    const medV = med * k;
    const swing = q99 - q01;
    const m = measurePrepared(p, k);
    const duration = p.n / p.rate;
    if (p.unit === "V" && medV > 8 && medV < 18 && q01 * k < 0.25 * medV && p.max * k > 2 * medV) {
      return {
        kind: "injector",
        from: "shape",
        reason: `rests at ${medV.toFixed(1)} V, drops to near 0 V and spikes to ${(p.max * k).toFixed(0)} V at turn-off`,
      };
    }
    const up = p.max - med;
    const down = med - p.min;
    const ex = Math.max(up, down);
    const exQ = up >= down ? q995 - med : med - q005;
    if (ex > 4 * Math.max(exQ, 3 * noise) && ex > 20 * noise) {
      return {
        kind: "secondary-ignition",
        from: "shape",
        reason: "short tall spikes over a quiet baseline, like firing lines",
      };
    }
    // One firing in a short capture: its spark line fills the upper percentiles, but the firing line
    // still stands far above them (a square or sine wave's extreme is close to its 90th percentile).
    const exQ90 =
      up >= down ? histogramQuantile(p.v, 0.9, p.min, p.max) - med : med - histogramQuantile(p.v, 0.1, p.min, p.max);
    const inAmps = p.units.quantity === "current" || settings.probe === "current-clamp";
    if (
      !inAmps &&
      ex > 5 * Math.max(exQ90, 3 * noise) &&
      ex > 20 * noise &&
      shortSpike(p.v, med, up >= down ? 1 : -1, ex)
    ) {
      return {
        kind: "secondary-ignition",
        from: "shape",
        reason: "a tall, short spike standing far above a lower plateau, like a firing line and its spark line",
      };
    }
    if (
      Math.abs(med) < 0.1 * swing &&
      m.frequencyHz != null &&
      m.frequencyHz > 50 &&
      q99 > 0.3 * -q01 &&
      q99 < 3 * -q01
    ) {
      return {
        kind: "crank",
        from: "shape",
        reason: `swings about 0 V ${Math.round(m.frequencyHz)} times a second, like a toothed wheel's sensor`,
      };
    }
    const current = p.units.quantity === "current" || settings.probe === "current-clamp";
    if (current && medV > 0 && duration > 0.4) {
      // the later part of the capture, clear of the inrush at key-on
      const t0 = input.t0 ?? 0;
      const late = measurePrepared(prepare(input, { startS: t0 + 0.4 * duration }), k);
      const f = late.frequencyHz;
      if (f != null && f > 1 && f < 80) {
        return {
          kind: "relative-compression",
          from: "shape",
          reason: `a current with about ${f.toFixed(0)} peaks a second, like cranking`,
        };
      }
    }
  }
  if (settings.probe === "capacitive-secondary")
    return { kind: "secondary-ignition", from: "settings", reason: "a capacitive secondary pickup was used" };
  if (settings.probe === "current-clamp")
    return { kind: "relative-compression", from: "settings", reason: "a current clamp was used" };
  return { kind: "generic", from: "default", reason: "nothing in the settings or the shape points to a kind" };
}

/** True when fewer than 1 % of the samples lie beyond half the spike's height: a spike, not a pulse train. */
function shortSpike(v: ArrayLike<number>, base: number, sign: 1 | -1, height: number): boolean {
  const half = height / 2;
  let beyond = 0;
  for (let i = 0; i < v.length; i++) if (sign * (v[i] - base) > half) beyond++;
  return beyond < 0.01 * v.length;
}
