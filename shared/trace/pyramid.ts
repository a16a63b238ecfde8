/**
 * Min/max pyramid: for block sizes 64, 4096, 262144, … (each 64 times the one below) the minimum
 * and maximum of every block of samples. The min/max of any index range [a, b) then needs at most
 * 2·63 samples and 2·63 blocks per level below the top one used, instead of b − a samples.
 */

export const PYRAMID_BASE_BLOCK = 64;
export const PYRAMID_FACTOR = 64;

export interface MinMaxLevel {
  /** samples per block; block j covers samples [j·blockSize, min((j+1)·blockSize, n)) */
  blockSize: number;
  min: Float32Array;
  max: Float32Array;
}

/** Block sizes used for n samples: 64, 4096, … as long as at least one full block fits. */
export function pyramidBlockSizes(n: number): number[] {
  const sizes: number[] = [];
  for (let bs = PYRAMID_BASE_BLOCK; bs <= n; bs *= PYRAMID_FACTOR) sizes.push(bs);
  return sizes;
}

export function buildPyramid(values: Float32Array, n: number = values.length): MinMaxLevel[] {
  const levels: MinMaxLevel[] = [];
  const sizes = pyramidBlockSizes(n);
  for (let l = 0; l < sizes.length; l++) {
    const bs = sizes[l];
    const blocks = Math.ceil(n / bs);
    const min = new Float32Array(blocks);
    const max = new Float32Array(blocks);
    if (l === 0) {
      for (let j = 0; j < blocks; j++) {
        const end = Math.min(n, (j + 1) * bs);
        let lo = Infinity;
        let hi = -Infinity;
        for (let i = j * bs; i < end; i++) {
          const x = values[i];
          if (x < lo) lo = x;
          if (x > hi) hi = x;
        }
        min[j] = lo;
        max[j] = hi;
      }
    } else {
      const below = levels[l - 1];
      const per = bs / below.blockSize;
      const nb = below.min.length;
      for (let j = 0; j < blocks; j++) {
        const end = Math.min(nb, (j + 1) * per);
        let lo = Infinity;
        let hi = -Infinity;
        for (let k = j * per; k < end; k++) {
          if (below.min[k] < lo) lo = below.min[k];
          if (below.max[k] > hi) hi = below.max[k];
        }
        min[j] = lo;
        max[j] = hi;
      }
    }
    levels.push({ blockSize: bs, min, max });
  }
  return levels;
}

/** Running extremes; `min > max` (Infinity, -Infinity) until a sample is seen. */
export interface MinMaxAcc {
  min: number;
  max: number;
}

/** Reads raw samples: updates `acc` with the extremes of samples [i0, i1). */
export interface RawScanner {
  scan(i0: number, i1: number, acc: MinMaxAcc): void;
}

/** Raw samples held in memory; `values[k]` is sample `offset + k`. */
export class ArrayScanner implements RawScanner {
  constructor(
    private readonly values: Float32Array,
    private readonly offset = 0,
  ) {}
  scan(i0: number, i1: number, acc: MinMaxAcc): void {
    const v = this.values;
    const o = this.offset;
    let lo = acc.min;
    let hi = acc.max;
    for (let i = i0 - o, e = i1 - o; i < e; i++) {
      const x = v[i];
      if (x < lo) lo = x;
      if (x > hi) hi = x;
    }
    acc.min = lo;
    acc.max = hi;
  }
}

/**
 * Raw samples available as 64-sample blocks (e.g. only the blocks a query read from disk):
 * `block(j)` returns samples [64j, 64j + length) of the channel.
 */
export class BlockScanner implements RawScanner {
  constructor(private readonly block: (j: number) => Float32Array | undefined) {}
  scan(i0: number, i1: number, acc: MinMaxAcc): void {
    const bs = PYRAMID_BASE_BLOCK;
    let lo = acc.min;
    let hi = acc.max;
    let i = i0;
    while (i < i1) {
      const j = Math.floor(i / bs);
      const block = this.block(j);
      if (!block) throw new Error(`block ${j} was not loaded`);
      const start = j * bs;
      const end = Math.min(i1, start + bs);
      for (let k = i - start, e = end - start; k < e; k++) {
        const x = block[k];
        if (x < lo) lo = x;
        if (x > hi) hi = x;
      }
      i = end;
    }
    acc.min = lo;
    acc.max = hi;
  }
}

function scanLevel(level: MinMaxLevel, j0: number, j1: number, acc: MinMaxAcc) {
  const mn = level.min;
  const mx = level.max;
  let lo = acc.min;
  let hi = acc.max;
  for (let j = j0; j < j1; j++) {
    if (mn[j] < lo) lo = mn[j];
    if (mx[j] > hi) hi = mx[j];
  }
  acc.min = lo;
  acc.max = hi;
}

/**
 * Extremes of samples [a, b) into `acc`, using the pyramid's full blocks inside the range and raw
 * samples only at the ends. Raw samples read lie in the 64-sample blocks holding `a` and `b`
 * (for b − a < 128 with no full block inside, the range lies within those two blocks).
 */
export function rangeMinMax(
  raw: RawScanner,
  levels: readonly MinMaxLevel[],
  a: number,
  b: number,
  acc: MinMaxAcc,
): void {
  if (b <= a) return;
  let top = levels.length - 1;
  let A = 0;
  let B = 0;
  for (; top >= 0; top--) {
    const bs = levels[top].blockSize;
    A = Math.ceil(a / bs) * bs;
    B = Math.floor(b / bs) * bs;
    if (A < B) break;
  }
  if (top < 0) {
    raw.scan(a, b, acc);
    return;
  }
  const topBs = levels[top].blockSize;
  scanLevel(levels[top], A / topBs, B / topBs, acc);
  let hi = A;
  for (let l = top - 1; l >= 0; l--) {
    const bs = levels[l].blockSize;
    const s = Math.ceil(a / bs) * bs;
    if (s < hi) {
      scanLevel(levels[l], s / bs, hi / bs, acc);
      hi = s;
    }
  }
  raw.scan(a, hi, acc);
  let lo = B;
  for (let l = top - 1; l >= 0; l--) {
    const bs = levels[l].blockSize;
    const e = Math.floor(b / bs) * bs;
    if (e > lo) {
      scanLevel(levels[l], lo / bs, e / bs, acc);
      lo = e;
    }
  }
  raw.scan(lo, b, acc);
}
