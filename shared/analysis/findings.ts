/**
 * The safety caution carried by every piece of advice that involves the ignition secondary.
 * Wording is ours; the content is the trade's usual caution (common practice, no source).
 */
export const SECONDARY_SAFETY =
  "Caution: the ignition secondary carries tens of kilovolts. Follow the vehicle manufacturer's procedure, local codes and licensed practice, and keep hands and leads clear of the coil and plug leads while the engine runs.";

/** A general caution for captures taken on a running or cranking engine. */
export const ENGINE_SAFETY =
  "Caution: follow the vehicle manufacturer's procedure, local codes and licensed practice; keep clear of moving parts, and disable fuel and ignition as the maker directs before cranking tests (the ignition secondary carries tens of kilovolts).";

export function withSafety(advice: string, caution: string = SECONDARY_SAFETY): string {
  return `${advice} ${caution}`;
}
