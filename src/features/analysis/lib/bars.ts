/**
 * Geometry of the bar charts (cylinder by cylinder, relative compression): pure, so it is tested
 * without a browser. Values map linearly onto the chart's height from a zero baseline.
 */

export interface BarInput {
  key: string;
  /** under the bar (short: "Cyl 3") */
  label: string;
  /** in the chart's words for screen readers (default: the label) */
  name?: string;
  value: number | null;
  /** drawn in the alarm colour (the odd one out, a weak cylinder) */
  odd?: boolean;
}

export interface Bar extends BarInput {
  x: number;
  width: number;
  /** top of the bar (SVG y grows downwards) and its height; a missing value has height 0 */
  y: number;
  height: number;
}

export interface BarLayout {
  bars: Bar[];
  /** the value axis: `max` maps to `top`, 0 (or `min` when values go below it) to `baseline` */
  min: number;
  max: number;
  baseline: number;
  y: (v: number) => number;
}

/**
 * Bars across [left, left + width], each in an equal slot with a gap; heights from 0 to the
 * largest value (or `ceiling`, e.g. 100 for percentages), the value axis spanning top…bottom.
 */
export function barLayout(
  items: BarInput[],
  box: { left: number; width: number; top: number; bottom: number },
  ceiling?: number,
): BarLayout {
  const vals = items.map((i) => i.value).filter((v): v is number => v != null && Number.isFinite(v));
  const max = Math.max(ceiling ?? 0, 0, ...vals);
  const min = Math.min(0, ...vals);
  const span = max - min || 1;
  const y = (v: number) => box.bottom - ((v - min) / span) * (box.bottom - box.top);
  const slot = box.width / Math.max(1, items.length);
  const w = Math.max(4, slot * 0.62);
  const baseline = y(0);
  const bars = items.map((it, i) => {
    const x = box.left + slot * i + (slot - w) / 2;
    if (it.value == null || !Number.isFinite(it.value)) return { ...it, x, width: w, y: baseline, height: 0 };
    const yv = y(it.value);
    return { ...it, x, width: w, y: Math.min(yv, baseline), height: Math.abs(baseline - yv) };
  });
  return { bars, min, max, baseline, y };
}
