/**
 * Seeded pseudo-random numbers for tests, generators and benchmarks (same seed → same data).
 * mulberry32: a 32-bit generator by Tommy Ettinger (public domain), from memory.
 */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** A seeded generator with a few helpers. */
export function createRng(seed: number) {
  const next = mulberry32(seed);
  return {
    /** uniform in [0, 1) */
    next,
    /** uniform in [lo, hi) */
    range: (lo: number, hi: number) => lo + (hi - lo) * next(),
    /** whole number in [lo, hi] */
    int: (lo: number, hi: number) => lo + Math.floor((hi - lo + 1) * next()),
    /** standard normal (Box–Muller) */
    normal: () => Math.sqrt(-2 * Math.log(1 - next())) * Math.cos(2 * Math.PI * next()),
    pick: <T>(xs: readonly T[]): T => xs[Math.floor(next() * xs.length)],
  };
}
export type Rng = ReturnType<typeof createRng>;
