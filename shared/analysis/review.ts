import { detectClipping, type Prepared } from "./signal";
import { fmt } from "./format";
import { withSafety, ENGINE_SAFETY } from "./findings";
import type { CaptureSettings } from "../schemas/capture-settings";
import type { Finding } from "./types";

/** `clipped` for kinds other than the ignition secondary. */
export function clippedFinding(
  p: Prepared,
  reference: number,
  screen: { min: number; max: number } | null,
  settings: Partial<CaptureSettings>,
  what: string,
  caution = ENGINE_SAFETY,
): Finding | null {
  const clip = detectClipping(p, reference, screen);
  if (!clip.top && !clip.bottom) return null;
  const where = clip.top && clip.bottom ? "top and bottom" : clip.top ? "top" : "bottom";
  const vpd = settings.voltsPerDiv ? ` to ${fmt(settings.voltsPerDiv * 2)} V/div or more` : "";
  return {
    code: "clipped",
    severity: "warning",
    message: `The trace sits flat against the ${where} of the range: ${what} read low.`,
    advice: withSafety(
      `Raise volts/division${vpd}, or move the ground offset ${clip.top ? "down" : "up"}, so the whole waveform stays on the screen, then capture again.`,
      caution,
    ),
  };
}

/** `trigger-above-signal` when the recorded trigger level lies outside everything the signal reaches. */
export function triggerBeyondFinding(
  p: Prepared,
  settings: Partial<CaptureSettings>,
  suggestedLevelV: number | null,
  caution = ENGINE_SAFETY,
): Finding | null {
  if (settings.triggerLevel == null || p.n === 0) return null;
  const level = settings.triggerLevel / p.toBase;
  if (level <= p.max && level >= p.min) return null;
  const sugg =
    suggestedLevelV != null && Number.isFinite(suggestedLevelV) ? ` A level of about ${fmt(suggestedLevelV)} V gives a stable display.` : "";
  return {
    code: "trigger-above-signal",
    severity: "warning",
    message: `The trigger level (${fmt(settings.triggerLevel)} V) is beyond anything the signal reaches, so the scope would never trigger on it.`,
    advice: withSafety(`Bring the trigger level inside the waveform.${sugg}`, caution),
  };
}
