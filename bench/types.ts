/** One figure of a benchmark. Ratios are against a baseline measured in the same run. */
export interface BenchResult {
  name: string;
  value: number;
  unit: string;
  /** what the ratio is against, measured in the same run */
  baseline?: string;
  ratio?: number;
  /** the goal in words, e.g. "ratio ≥ 0.5" or "p99 < 25 ms" */
  goal?: string;
  pass?: boolean;
}

/** Median of a list of numbers (copies, does not sort in place). */
export function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** Nearest-rank percentile, p in (0, 100]. */
export function percentile(xs: number[], p: number): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.max(0, Math.ceil((p / 100) * s.length) - 1))];
}
