import { barLayout, type BarInput } from "../lib/bars";
import { fmtNum } from "../lib/format";

/** The product's palette (src/styles.css): ink for the bars, alarm for the odd one, kiln for reference lines. */
export const CHART_COLORS = {
  bar: "#748893",
  odd: "#a2322c",
  reference: "#b76414",
  axis: "#566b77",
  grid: "#e4e9ec",
  text: "#1e2a32",
} as const;

export interface BarChartProps {
  /** what the chart shows, said in full for screen readers and as its caption */
  title: string;
  unit: string;
  items: BarInput[];
  /** a dashed reference line (the median, the 85 % threshold) */
  reference?: { value: number; label: string } | null;
  /** the value axis reaches at least this (100 for percentages) */
  ceiling?: number;
  /** how a value is printed over its bar */
  format?: (v: number) => string;
}

const H = 150;
const TOP = 18;
const BOTTOM = 118;
/** room at the right for the reference line's label, clear of the bars and their values */
const LABEL_W = 52;

/**
 * A small bar chart in plain SVG: one bar per item with its value on top and its label below,
 * a dashed reference line, the odd ones in the alarm colour. It scales with its container.
 */
export function BarChart({ title, unit, items, reference, ceiling, format = (v) => fmtNum(v) }: BarChartProps) {
  const width = Math.max(240, 58 * items.length + 24 + LABEL_W);
  const layout = barLayout(
    items,
    { left: 12, width: width - 24 - LABEL_W, top: TOP, bottom: BOTTOM },
    Math.max(ceiling ?? 0, reference?.value ?? 0),
  );
  const said = items
    .map((i) => `${i.name ?? i.label} ${i.value == null ? "no value" : format(i.value)}${i.odd ? " (stands out)" : ""}`)
    .join(", ");
  const refY = reference ? layout.y(reference.value) : null;
  return (
    <figure className="min-w-0">
      <figcaption className="mb-1 text-sm font-semibold text-ink-800">
        {title}
        {unit ? <span className="font-normal text-ink-500"> ({unit})</span> : null}
      </figcaption>
      <svg
        viewBox={`0 0 ${width} ${H}`}
        className="block h-auto w-full max-w-lg"
        role="img"
        aria-label={`${title}${unit ? `, ${unit}` : ""}: ${said}${reference ? `; ${reference.label} ${format(reference.value)}` : ""}`}
      >
        <line
          x1={8}
          x2={width - LABEL_W}
          y1={layout.baseline}
          y2={layout.baseline}
          stroke={CHART_COLORS.axis}
          strokeWidth={1}
        />
        {layout.bars.map((b) => (
          <g key={b.key} data-odd={b.odd ? "true" : undefined}>
            <rect
              x={b.x}
              y={b.y}
              width={b.width}
              height={Math.max(b.height, b.value == null ? 0 : 1)}
              rx={2}
              fill={b.odd ? CHART_COLORS.odd : CHART_COLORS.bar}
            />
            <text
              x={b.x + b.width / 2}
              y={Math.max(11, b.y - 4)}
              textAnchor="middle"
              fontSize={11}
              fontWeight={b.odd ? 700 : 400}
              fill={b.odd ? CHART_COLORS.odd : CHART_COLORS.text}
            >
              {b.value == null ? "—" : format(b.value)}
            </text>
            <text x={b.x + b.width / 2} y={BOTTOM + 16} textAnchor="middle" fontSize={11} fill={CHART_COLORS.text}>
              {b.label}
            </text>
            {b.odd ? (
              <text
                x={b.x + b.width / 2}
                y={BOTTOM + 29}
                textAnchor="middle"
                fontSize={10}
                fontWeight={700}
                fill={CHART_COLORS.odd}
              >
                odd one
              </text>
            ) : null}
          </g>
        ))}
        {reference && refY != null ? (
          <g>
            <line
              x1={8}
              x2={width - LABEL_W}
              y1={refY}
              y2={refY}
              stroke={CHART_COLORS.reference}
              strokeWidth={1.5}
              strokeDasharray="5 3"
            />
            <text x={width - LABEL_W + 4} y={refY + 3.5} fontSize={10} fill={CHART_COLORS.reference}>
              {reference.label}
            </text>
          </g>
        ) : null}
      </svg>
    </figure>
  );
}
