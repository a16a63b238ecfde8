/**
 * Secondary ignition, dwell stage: the coil's turn-on before each firing line. At turn-on the
 * primary current starts to flow and the secondary shows a step (the coil's charge, on the side
 * opposite the firing line), often with a damped wobble. The turn-on is where the signal first
 * leaves a quiet stretch of baseline (100 µs or more) between the previous event and the firing
 * line's foot; it is timed at half the first swing (a centred average leaves that point in place).
 * No quiet baseline, or no departure from it: the turn-on is not in the capture (null).
 *
 * The dwell also settles what a small excursion before a firing is: anything between a firing's
 * turn-on and its firing line, and far smaller than it, is the dwell start's wobble or the coil's
 * charge (even when the charge sits on the firing side and looks like a short spark line), not a
 * firing of its own (a dwell start is followed by the coil's charge, not a burn).
 */
import type { RawEvent } from "./secondary-events";
import type { SecondaryLevels } from "./secondary-levels";
import { boxcar, timeAtFrac, type Prepared } from "./signal";

const DWELL_SEARCH_S = 12e-3;
const DWELL_SMOOTH_S = 20e-6;
const QUIET_S = 100e-6;
const FOOT_GUARD_S = 20e-6;
const SWING_S = 200e-6;

/** The turn-on's time before this firing, looking back no further than `prevEnd`; null when not seen. */
function turnOn(p: Prepared, lv: SecondaryLevels, e: RawEvent, prevEnd: number): number | null {
  const { v, rate } = p;
  const { sign, base } = lv;
  const apex = e.apex.index;
  // the firing line's foot: back from the apex to where it was below 10 % of its height
  let foot = apex;
  const footLimit = Math.max(0, apex - Math.ceil(rate * 200e-6));
  while (foot > footLimit && sign * (v[foot - 1] - base) > 0.1 * e.apex.height) foot--;
  const wa = Math.max(prevEnd, apex - Math.ceil(rate * DWELL_SEARCH_S), 0);
  const wb = foot - Math.ceil(rate * FOOT_GUARD_S);
  const quietRun = Math.max(2, Math.ceil(rate * QUIET_S));
  if (wb - wa <= quietRun + 4) return null;
  const wD = Math.max(1, Math.round(rate * DWELL_SMOOTH_S) | 1);
  const ys = boxcar(v, wa, wb, wD, sign, base);
  const th = Math.max((6 * lv.noise) / Math.sqrt(wD), 0.02 * e.apex.height);
  let k = 0;
  let run = 0;
  for (; k < ys.length && run < quietRun; k++) run = Math.abs(ys[k]) < th ? run + 1 : 0;
  if (run < quietRun) return null;
  while (k < ys.length && Math.abs(ys[k]) < th) k++;
  if (k >= ys.length) return null;
  // time the first swing at half its height
  const last = k - 1;
  const dir = ys[k] >= 0 ? 1 : -1;
  const swingEnd = Math.min(ys.length, last + Math.max(3, Math.ceil(rate * SWING_S)));
  let m2 = 0;
  for (let q = last; q < swingEnd; q++) {
    const d = dir * ys[q];
    if (d > m2) m2 = d;
    else if (d < 0 && m2 > th) break; // the swing turned back past the baseline
  }
  let q = last;
  while (q + 1 < swingEnd && dir * ys[q + 1] < 0.5 * m2) q++;
  const y0 = dir * ys[q];
  const y1 = q + 1 < ys.length ? dir * ys[q + 1] : y0;
  const f = y1 !== y0 ? (0.5 * m2 - y0) / (y1 - y0) : 0;
  return timeAtFrac(p, wa + q + Math.min(1, Math.max(0, f)));
}

/** A small excursion inside a firing's dwell is part of that dwell: at most this fraction of the firing line. */
const DWELL_PART = 0.3;

/**
 * Removes the events that lie inside a taller firing's dwell (see the module's note). The turn-on of
 * each firing of at least half the tallest is looked for back to the previous such firing.
 */
export function dropDwellStarts(p: Prepared, lv: SecondaryLevels, events: RawEvent[]): RawEvent[] {
  const tallest = events.reduce((m, e) => Math.max(m, e.apex.height), 0);
  const drop = new Set<RawEvent>();
  let prevTallEnd = 0;
  for (const f of events) {
    if (f.apex.height < 0.5 * tallest) continue;
    const tOn = turnOn(p, lv, f, prevTallEnd);
    prevTallEnd = f.end;
    if (tOn == null) continue;
    const tApex = timeAtFrac(p, f.apex.at);
    for (const x of events) {
      const t = timeAtFrac(p, x.apex.at);
      if (x !== f && t >= tOn - 50e-6 && t < tApex && x.apex.height < DWELL_PART * f.apex.height) drop.add(x);
    }
  }
  return drop.size ? events.filter((e) => !drop.has(e)) : events;
}

/** Fills in each event's dwell (s), looking back no further than the previous event's end. */
export function measureDwell(p: Prepared, lv: SecondaryLevels, events: RawEvent[]): void {
  events.forEach((e, k) => {
    const tOn = turnOn(p, lv, e, k > 0 ? events[k - 1].end : 0);
    const dwell = tOn != null ? timeAtFrac(p, e.apex.at) - tOn : null;
    e.dwellS = dwell != null && dwell > 0 ? dwell : null;
  });
}
