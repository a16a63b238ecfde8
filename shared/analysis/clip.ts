/**
 * Clipping: did the signal run into the top or bottom of the scope's range?
 *
 * Two signs, either one is enough:
 * - with the screen known (volts/division and ground offset): samples within 0.5 % of the screen's
 *   edge, none beyond it (a scope records what its screen holds, plus a little). A trace that goes
 *   on past the edge was recorded beyond the screen: the file holds it whole, it is not clipped (it
 *   was only off the tech's screen);
 * - always: a saturated plateau. A converter driven past its range repeats its last code, so the
 *   waveform shows a run of identical values at its extreme, entered and left on a slope that would
 *   have carried it further. A natural rounded apex can also repeat a code when the noise is under
 *   one step of the converter, but its slope flattens into the top: the plateau must be at least
 *   `MIN_RUN` samples long and the slope beside it, carried over half the run, must overshoot the
 *   plateau by 2 % of the excursion and by several converter steps. On a coarse grid a cut-off peak
 *   holds only a sample or two, so the same extreme reached by two runs of two, or by three separate
 *   runs, counts as well. Flat states of a digital signal
 *   (a sensor's high level) are long: a plateau holding more than 5 % of the samples is not clipping.
 */
import type { Prepared } from "./signal";
import { blockSample } from "./stats";

export interface ClipInfo {
  top: boolean;
  bottom: boolean;
  /** the level (stored units) the signal was cut at, when clipped on that side */
  topLevel: number | null;
  bottomLevel: number | null;
}

/** Shortest run of identical extreme values taken as saturation. */
export const MIN_RUN = 3;
/** The largest share of all samples a saturated plateau may hold. */
const MAX_SHARE = 0.05;

interface Plateau {
  /** runs of MIN_RUN or more, of 2 or more, and of any length */
  runs: number;
  runs2: number;
  all: number;
  count: number;
  /** the largest overshoot of a run (see the module's note), stored units */
  overshoot: number;
}

/** Runs of samples exactly equal to `extreme`, with the slope-carried overshoot of each. */
function plateauRuns(v: Float32Array, n: number, extreme: number, dir: 1 | -1): Plateau {
  const out: Plateau = { runs: 0, runs2: 0, all: 0, count: 0, overshoot: 0 };
  let i = 0;
  while (i < n) {
    if (v[i] !== extreme) {
      i++;
      continue;
    }
    let j = i;
    while (j < n && v[j] === extreme) j++;
    const len = j - i;
    out.count += len;
    out.all++;
    if (len >= 2) out.runs2++;
    if (len >= MIN_RUN) out.runs++;
    {
      // mean slope over up to three samples before and after the run, toward the extreme
      const k = 3;
      const slopes: number[] = [];
      if (i - k >= 0) slopes.push((dir * (extreme - v[i - k])) / k);
      else if (i > 0) slopes.push((dir * (extreme - v[0])) / i);
      if (j - 1 + k < n) slopes.push((dir * (extreme - v[j - 1 + k])) / k);
      else if (j < n) slopes.push((dir * (extreme - v[n - 1])) / (n - j));
      if (slopes.length) {
        const slope = slopes.reduce((a, b) => a + b, 0) / slopes.length;
        out.overshoot = Math.max(out.overshoot, (slope * len) / 2);
      }
    }
    i = j;
  }
  return out;
}

/**
 * The converter's step: the smallest difference between distinct values of the signal (read from
 * evenly spread blocks of a long one). Values written with few digits, or by a coarse converter,
 * show it; a finely resolved signal gives a step far below any plateau test.
 */
function codeStep(v: Float32Array): number {
  const xs = Array.from(blockSample(v)).sort((a, b) => a - b);
  let q = Infinity;
  for (let i = 1; i < xs.length; i++) {
    const d = xs[i] - xs[i - 1];
    if (d > 0 && d < q) q = d;
  }
  return Number.isFinite(q) ? q : 0;
}

function saturated(p: Prepared, dir: 1 | -1, reference: number, noise: number): boolean {
  const extreme = dir > 0 ? p.max : p.min;
  const excursion = dir * (extreme - reference);
  if (!(excursion > 0) || excursion < 8 * noise) return false;
  const pl = plateauRuns(p.v, p.n, extreme, dir);
  // one long run; or, on a coarse grid where each cut-off peak holds few samples, the same extreme
  // reached again and again (two runs of two, or three separate runs)
  const repeated = pl.runs >= 1 || pl.runs2 >= 2 || pl.all >= 3;
  if (!repeated || pl.count > MAX_SHARE * p.n) return false;
  const q = codeStep(p.v);
  return pl.overshoot >= Math.max(0.02 * excursion, 8 * q);
}

/**
 * Clipping on either side. `reference` is the signal's resting level (stored units), `noise` its
 * noise RMS (stored units), `screen` the screen's range in stored units when volts/division is known.
 */
export function detectClipping(
  p: Prepared,
  reference: number,
  screen?: { min: number; max: number } | null,
  noise = 0,
): ClipInfo {
  const none: ClipInfo = { top: false, bottom: false, topLevel: null, bottomLevel: null };
  if (p.n < MIN_RUN || !(p.max > p.min)) return none;
  let top = false;
  let bottom = false;
  if (screen && screen.max > screen.min) {
    const known = p.extremes.screen;
    let cTop = 0;
    let cBottom = 0;
    if (known && known.min === screen.min && known.max === screen.max) {
      cTop = known.top;
      cBottom = known.bottom;
    } else {
      const tol = 0.005 * (screen.max - screen.min);
      for (let i = 0; i < p.n; i++) {
        if (p.v[i] >= screen.max - tol) cTop++;
        else if (p.v[i] <= screen.min + tol) cBottom++;
      }
    }
    // recorded past the edge: the file holds the waveform beyond the screen, nothing was cut there
    const edgeTol = 0.005 * (screen.max - screen.min);
    top = cTop >= 2 && p.max <= screen.max + edgeTol;
    bottom = cBottom >= 2 && p.min >= screen.min - edgeTol;
  }
  top = top || saturated(p, 1, reference, noise);
  bottom = bottom || saturated(p, -1, reference, noise);
  const cutTop = screen && screen.max > screen.min ? Math.min(p.max, screen.max) : p.max;
  const cutBottom = screen && screen.max > screen.min ? Math.max(p.min, screen.min) : p.min;
  return { top, bottom, topLevel: top ? cutTop : null, bottomLevel: bottom ? cutBottom : null };
}
