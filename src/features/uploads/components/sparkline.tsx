import { useMemo } from "react";
import type { ParsedTrace } from "../../../../shared/trace/types";
import { minMaxBuckets } from "../lib/preview";

const COLOURS = ["#d4831f", "#2f8f83", "#566b77", "#924a14"];

/** A small min/max envelope of each channel (up to four), drawn as SVG. */
export function Sparkline({
  trace,
  width = 320,
  height = 64,
  label,
}: {
  trace: ParsedTrace;
  width?: number;
  height?: number;
  label: string;
}) {
  const paths = useMemo(() => {
    const chans = trace.channels.slice(0, 4);
    let lo = Infinity;
    let hi = -Infinity;
    for (const c of chans) {
      lo = Math.min(lo, c.min);
      hi = Math.max(hi, c.max);
    }
    if (!Number.isFinite(lo) || !Number.isFinite(hi)) return [];
    const span = hi - lo || 1;
    const buckets = Math.min(width, trace.samples);
    const y = (v: number) => (height - 2 - ((v - lo) / span) * (height - 4)).toFixed(1);
    return chans.map((c) => {
      const { min, max } = minMaxBuckets(c.values, buckets);
      const dx = width / Math.max(1, min.length);
      let d = "";
      for (let k = 0; k < min.length; k++) {
        const x = (k * dx + dx / 2).toFixed(1);
        d += `M${x} ${y(max[k])}L${x} ${y(min[k])}`;
        if (k + 1 < min.length) d += `L${((k + 1) * dx + dx / 2).toFixed(1)} ${y(min[k + 1])}`;
      }
      return d;
    });
  }, [trace, width, height]);

  return (
    <svg
      viewBox={`0 0 ${width} ${height}`}
      preserveAspectRatio="none"
      className="h-16 w-full rounded-md bg-ink-950"
      role="img"
      aria-label={label}
    >
      {paths.map((d, i) => (
        <path
          key={i}
          d={d}
          fill="none"
          stroke={COLOURS[i % COLOURS.length]}
          strokeWidth="1"
          vectorEffect="non-scaling-stroke"
        />
      ))}
    </svg>
  );
}
