/**
 * Secondary ignition, stage 1: finding the firing events.
 *
 * Every crossing of the detection threshold on the firing side is a candidate: a firing line, but
 * also the wobble of a dwell start (commonly 5–15 % of the firing line, common practice, no source),
 * a ringing lobe or an extinction bump. They are told apart by shape, not by size alone:
 * - a firing line is followed by a spark line of sustained duration on the firing side; a dwell
 *   start is followed by the coil's charge (at or beyond the baseline on the other side, or, when on
 *   the firing side, ending in a firing line far taller than itself), a ringing lobe by more ringing;
 * - a candidate with no spark line still counts as a firing when it is as tall as the firings (at
 *   least half the tallest): an open secondary fires and rings without a burn.
 * A candidate that is not a firing is passed over without consuming the samples after it, so a
 * firing that follows it closely is still found. A confirmed firing is measured here (apex, spark
 * line, ringing) and the search resumes after its ringing has died away.
 */
import { firingLineApex, type Apex } from "./secondary-apex";
import { APEX_SEARCH_S, RING_WINDOW_S, type SecondaryLevels } from "./secondary-levels";
import { coilRinging } from "./secondary-ringing";
import { probeSpark, sparkWindows, trackSparkLine } from "./secondary-spark";
import { boxcar, timeAtFrac, type Prepared } from "./signal";

export interface RawEvent {
  apex: Apex;
  /** spark line's first level (y) */
  sparkLevel0: number;
  /** absolute fractional index of the spark line's end */
  endFrac: number;
  burnS: number;
  burnLevelY: number;
  slopeYPerS: number | null;
  oscillations: number;
  ringingHz: number | null;
  /** index where the event (its ringing) has died away */
  end: number;
  /** index where a far taller firing line cut the event short (the next candidate), or −1 */
  tallerAt: number;
  /** dwell, filled in by the dwell stage */
  dwellS: number | null;
}

interface Candidate {
  apex: Apex;
  /** index where the candidate falls back below the threshold */
  below: number;
}

/** A level far above this excursion's own: the firing line of another event. */
const taller = (lv: SecondaryLevels, height: number) => Math.max(3 * height, 0.5 * lv.ymax);

/** Measures the firing whose apex is given; null when the capture ends before its spark line does. */
function measureFiring(p: Prepared, lv: SecondaryLevels, apex: Apex): RawEvent | null {
  const { n, rate } = p;
  const { skip, probe, maxBurn } = sparkWindows(rate);
  const ringWin = Math.ceil(rate * RING_WINDOW_S);
  const a = apex.index;
  const b = Math.min(n, a + maxBurn + ringWin);
  if (a + skip + probe >= b) return null;
  const all = boxcar(p.v, a, b, lv.w, lv.sign, lv.base);
  const spark = trackSparkLine(p, lv, a, all, b === n);
  if (!spark) return null;
  const endIdx = Math.floor(spark.endLocal);
  // the event never runs into a firing line far taller than its own (the next event's)
  const top = taller(lv, apex.height);
  let tallAt = -1;
  for (let k = Math.max(skip, endIdx); k < all.length; k++) {
    if (all[k] > top) {
      tallAt = k;
      break;
    }
  }
  const ys = tallAt >= 0 ? all.subarray(0, tallAt) : all;
  const ring = coilRinging(p, lv, a, ys, endIdx, ringWin);
  // the event lasts until the ringing has died away (quiet for 0.5 ms below half the threshold)
  const quietNeed = Math.max(2, Math.ceil(rate * 0.5e-3));
  let quiet = 0;
  let j = ring.stop;
  for (; j < ys.length && quiet < quietNeed; j++) quiet = Math.abs(ys[j]) < 0.5 * lv.thDet ? quiet + 1 : 0;
  const ringEnd = Math.max(endIdx, Math.min(ys.length - 1, j));
  return {
    apex,
    sparkLevel0: spark.level0,
    endFrac: a + spark.endLocal,
    burnS: timeAtFrac(p, a + spark.endLocal) - timeAtFrac(p, apex.at),
    burnLevelY: spark.levelY,
    slopeYPerS: spark.slopeYPerS,
    oscillations: ring.oscillations,
    ringingHz: ring.ringingHz,
    end: a + ringEnd,
    tallerAt: tallAt >= 0 ? a + tallAt : -1,
    dwellS: null,
  };
}

/** Is the candidate at this apex a firing by its spark line? */
function hasSparkLine(p: Prepared, lv: SecondaryLevels, apex: Apex): boolean {
  const { skip, probe } = sparkWindows(p.rate);
  const a = apex.index;
  const b = Math.min(p.n, a + skip + probe);
  if (b - a <= skip) return false;
  const ys = boxcar(p.v, a, b, lv.w, lv.sign, lv.base);
  return probeSpark(ys, p.rate, lv, apex.height).sustained;
}

/**
 * A dwell start whose coil charge sits on the firing side looks like a short spark line; but it
 * ends in the firing line, far taller than itself, where a spark line ends in a collapse or ringing.
 */
function endsInFiring(p: Prepared, lv: SecondaryLevels, e: RawEvent): boolean {
  const from = Math.max(0, Math.floor(e.endFrac));
  const to = Math.min(p.n, from + Math.ceil(p.rate * 100e-6) + 2);
  let top = -Infinity;
  for (let k = from; k < to; k++) top = Math.max(top, lv.sign * (p.v[k] - lv.base));
  return top >= 3 * e.apex.height && top >= 0.5 * lv.ymax;
}

/**
 * All firing events of the capture, in time order. A candidate starts at a crossing of the detection
 * threshold, or where a far taller excursion cut the previous candidate short (a firing line rising
 * from a dwell whose charge keeps the signal above the threshold).
 */
export function findFirings(p: Prepared, lv: SecondaryLevels): RawEvent[] {
  const { v, n, rate } = p;
  const { sign, base, thDet } = lv;
  const apexWin = Math.max(2, Math.ceil(rate * APEX_SEARCH_S));
  const up = base + sign * thDet;
  const above = (k: number) => (sign > 0 ? v[k] >= up : v[k] <= up);
  const events: RawEvent[] = [];
  const others: Candidate[] = [];
  let i = 1;
  let forced = -1;
  while (i < n) {
    let start = forced;
    forced = -1;
    if (start < 0) {
      while (i < n && !(above(i) && !above(i - 1))) i++;
      if (i >= n) break;
      start = i;
    }
    const apex = firingLineApex(p, lv, start, Math.min(n, start + apexWin));
    if (hasSparkLine(p, lv, apex)) {
      const e = measureFiring(p, lv, apex);
      if (!e) break; // the event runs off the end of the capture
      if (!endsInFiring(p, lv, e)) {
        events.push(e);
        i = e.end + 1;
        if (e.tallerAt >= 0) forced = e.tallerAt;
        continue;
      }
    }
    // not a firing: pass over its excursion, stopping at a far taller one
    const top = taller(lv, apex.height);
    let k = Math.max(start, apex.index);
    while (k < n && above(k) && sign * (v[k] - base) <= top) k++;
    if (k < n && above(k)) forced = k;
    others.push({ apex, below: k });
    i = k + 1;
  }
  return addTallFirings(p, lv, events, others);
}

/** Candidates without a spark line that are as tall as the firings (half the tallest or more). */
function addTallFirings(p: Prepared, lv: SecondaryLevels, events: RawEvent[], others: Candidate[]): RawEvent[] {
  if (others.length === 0) return events;
  const ref = Math.max(
    0,
    ...events.map((e) => e.apex.height),
    ...(events.length ? [] : others.map((c) => c.apex.height)),
  );
  const all = [...events];
  for (const c of others) {
    if (!(c.apex.height >= 0.5 * ref) || c.apex.height < lv.thDet) continue;
    const inside = all.some((e) => c.apex.index >= e.apex.index && c.apex.index <= e.end);
    if (inside) continue;
    const e = measureFiring(p, lv, c.apex);
    // a firing with a spark line wins over a tall candidate whose ringing would run into it
    if (e && !events.some((x) => x.apex.index > c.apex.index && x.apex.index <= e.end)) all.push(e);
  }
  all.sort((x, y) => x.apex.index - y.apex.index);
  // a tall candidate's own ringing may have been taken for more candidates: keep the first of overlaps
  const out: RawEvent[] = [];
  for (const e of all) {
    const last = out[out.length - 1];
    if (last && e.apex.index <= last.end) continue;
    out.push(e);
  }
  return out;
}
