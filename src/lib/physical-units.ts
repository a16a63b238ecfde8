/**
 * A value reported in some unit, in a channel's physical unit (the shared unit model of
 * shared/trace/units). Client-wide, so that every feature converts the same way without importing
 * another feature.
 */
import { parseUnit, type ChannelUnits } from "../../shared/trace/units";

export type { ChannelUnits } from "../../shared/trace/units";

/**
 * A value reported in `unit` (an analysis's result unit, say) in the channel's physical unit.
 * With a pickup or a clamp, volts (or mV) are volts at the scope: scaled by the probe (kV/V, or
 * 1000/(mV/A)); a value already in kV (pickup) or A (clamp) is physical. Otherwise the same
 * quantity is converted by its SI prefix ("V" → "kV"); anything else is returned unchanged.
 */
export function toPhysical(value: number, unit: string | null | undefined, cu: ChannelUnits): number {
  const from = parseUnit(unit);
  const to = parseUnit(cu.unit);
  if (from.si && from.base === "V" && ((cu.source === "pickup" && from.scale < 1e3) || cu.source === "clamp")) {
    return value * from.scale * cu.perScope;
  }
  if (from.si && to.si && from.base === to.base) return (value * from.scale) / to.scale;
  return value;
}
