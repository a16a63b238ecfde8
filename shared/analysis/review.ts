/**
 * Pieces of the capture review shared by every kind: the finding drafts and the caution rule, the
 * clipping and trigger remarks, and screen ranges — all in the channel's unit model: levels the tech
 * reads in the physical unit (`p.unit`), settings in the scope's unit (`p.units.scopeUnit`), with the
 * physical value beside a setting when the two differ (shared/trace/units.ts scopeSetting).
 */
import { screenVoltageRange, type CaptureSettings } from "../schemas/capture-settings";
import { formatQuantity, scopeSetting, type ChannelUnits } from "../trace/units";
import type { ClipInfo } from "./clip";
import { niceCeil, type Prepared } from "./signal";
import type { Finding, Severity } from "./types";

/** A finding while the review is built: `caution` marks advice that needs the safety caution. */
export interface FindingDraft extends Finding {
  caution?: boolean;
}

const SEVERITY_ORDER: Record<Severity, number> = { problem: 0, warning: 1, info: 2 };

/**
 * The findings as the result carries them: worst first (stable within a severity), and the safety
 * caution once per trace, after the first piece of advice that needs it (not repeated on each).
 */
export function finishFindings(drafts: FindingDraft[], caution: string): Finding[] {
  const sorted = drafts
    .map((d, i) => ({ d, i }))
    .sort((a, b) => SEVERITY_ORDER[a.d.severity] - SEVERITY_ORDER[b.d.severity] || a.i - b.i)
    .map((x) => x.d);
  let given = false;
  return sorted.map(({ caution: needs, ...f }) => {
    if (needs && !given) {
      given = true;
      return { ...f, advice: `${f.advice} ${caution}`.trim() };
    }
    return f;
  });
}

/** The screen's range in stored units, from volts/division and the ground offset (in scope units). */
export function screenRange(
  units: ChannelUnits,
  settings: Partial<CaptureSettings>,
): { min: number; max: number } | null {
  if (!(settings.voltsPerDiv && settings.voltsPerDiv > 0) || !(units.scopeFromFile > 0)) return null;
  const r = screenVoltageRange({ voltsPerDiv: settings.voltsPerDiv, groundOffsetDiv: settings.groundOffsetDiv ?? 0 });
  return { min: r.min / units.scopeFromFile, max: r.max / units.scopeFromFile };
}

/** A level in stored units, in the physical unit: "9.2 kV", "250 A", "151 mV". */
export function physical(p: Prepared, stored: number): string {
  return formatQuantity(stored * p.toPhysical, p.unit);
}

/** A level in scope units as the tech would set it, with the physical value beside it when they differ. */
export function setting(p: Prepared, scopeValue: number, per: "div" | null = null): string {
  return scopeSetting(scopeValue, p.units, per);
}

/** Volts/division (scope units) that puts `peakScope` (scope units, from ground) at about 80 % of the divisions. */
export function voltsPerDivFor(peakScope: number, settings: Partial<CaptureSettings>, up = true): number | null {
  const offset = settings.groundOffsetDiv ?? 0;
  const divs = up ? 4 - offset : 4 + offset;
  if (!(divs > 0.5) || !(peakScope > 0)) return null;
  return niceCeil((peakScope * 1.25) / divs);
}

/** `clipped` for kinds other than the ignition secondary. */
export function clippedFinding(
  p: Prepared,
  clip: ClipInfo,
  settings: Partial<CaptureSettings>,
  what: string,
): FindingDraft | null {
  if (!clip.top && !clip.bottom) return null;
  const where = clip.top && clip.bottom ? "top and bottom" : clip.top ? "top" : "bottom";
  const cut = clip.top ? clip.topLevel : clip.bottomLevel;
  const at = cut != null ? ` (cut off at ${physical(p, cut)})` : "";
  const vpd = settings.voltsPerDiv ? ` to ${setting(p, niceCeil(settings.voltsPerDiv * 2), "div")} or more` : "";
  return {
    code: "clipped",
    severity: "warning",
    message: `The trace sits flat against the ${where} of the scope's range${at}: ${what} read low.`,
    advice:
      `Raise volts/division${vpd}, or move the ground offset ${clip.top ? "down" : "up"}, so the whole ` +
      `waveform stays on the screen, then capture again.`,
    caution: true,
  };
}

/**
 * `trigger-above-signal` when the recorded trigger level (scope units) lies outside everything the
 * signal reaches; `suggestedScope` is a level in scope units that would trigger, when known.
 */
export function triggerBeyondFinding(
  p: Prepared,
  settings: Partial<CaptureSettings>,
  suggestedScope: number | null,
): FindingDraft | null {
  if (settings.triggerLevel == null || p.n === 0 || !(p.toScope > 0)) return null;
  const level = settings.triggerLevel / p.toScope;
  if (level <= p.max && level >= p.min) return null;
  const sugg =
    suggestedScope != null && Number.isFinite(suggestedScope)
      ? ` A level of about ${setting(p, suggestedScope)} gives a stable display.`
      : "";
  return {
    code: "trigger-above-signal",
    severity: "warning",
    message:
      `The trigger level (${setting(p, settings.triggerLevel)}) is beyond anything the signal reaches ` +
      `(${physical(p, p.min)} to ${physical(p, p.max)}), so the scope would never trigger on it.`,
    advice: `Bring the trigger level inside the waveform.${sugg}`,
    caution: true,
  };
}
