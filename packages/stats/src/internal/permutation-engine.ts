/**
 * Permutation null distributions of per-time-bin t statistics, shared by `permutationTimecourse`
 * and `clusterPermutationTest`.
 *
 * Designs: 'one-sample' (sign flips of the rows of a, H0: mean 0), 'paired' (sign flips of the
 * rows of a − b) and 'independent' (label shuffles of the pooled rows of a and b, Student t with
 * pooled variance). Row 0 of every plan is the observed labelling. With exact enumeration the
 * plan lists every sign vector (2ⁿ) or every labelling (C(n1 + n2, n1)), identity first;
 * otherwise rows 1..N are random. Each labelling is a 0/1 subset of rows, so the sums are table
 * lookups of the shared kernel (count-plan.ts).
 *
 * Zero spread: a labelling whose values (one-sample, paired) or whose groups (independent) have
 * no spread up to rounding gets t = ±∞ (mean or mean difference ≠ 0); such labellings tie with
 * each other (`tieTolerance`). A pooled column holding one value only has t = NaN throughout.
 */
import { TuningforkError } from '@tuningfork/core';
import type { Matrix, Rng } from '@tuningfork/core';
import { BLOCK, CountPlan, makeTable, weightedBlock } from './count-plan.js';

export type Design = 'one-sample' | 'paired' | 'independent';

export interface PermutationEngine {
  readonly design: Design;
  readonly cols: number;
  /** Rows of the plan: 1 + random permutations, or the full enumeration. */
  readonly rows: number;
  readonly exact: boolean;
  readonly df: number;
  /** Columns with a non-finite cell (t = NaN there). */
  readonly bad: Uint8Array;
  /** Calls `visit(c0, width, t)` for consecutive column blocks; t[jj·rows + r] is the t of row r. */
  forEachBlock(visit: (c0: number, width: number, t: Float64Array) => void): void;
}

/** C(n, k) when it is ≤ limit, else Infinity (exact integer arithmetic below 2^53). */
function chooseUpTo(n: number, k: number, limit: number): number {
  let c = 1;
  for (let i = 1; i <= k; i++) {
    c = (c * (n - k + i)) / i; // stays an integer: C(n − k + i, i)
    if (c > limit) return Infinity;
  }
  return c;
}

export function buildEngine(design: Design, a: Matrix, b: Matrix | null, permutations: number, rng: Rng): PermutationEngine {
  const cols = a.cols;
  // Data the kernel sums over, and per-column constants.
  let y: Float64Array;
  let n: number;
  let n1 = 0;
  if (design === 'independent') {
    n1 = a.rows;
    n = a.rows + b!.rows;
    y = new Float64Array(n * cols);
    y.set(a.data, 0);
    y.set(b!.data, a.rows * cols);
  } else if (design === 'paired') {
    n = a.rows;
    y = new Float64Array(n * cols);
    for (let i = 0; i < y.length; i++) y[i] = a.data[i]! - b!.data[i]!;
  } else {
    n = a.rows;
    y = a.data;
  }
  const bad = new Uint8Array(cols);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < cols; j++) { const v = y[i * cols + j]!; if (!(v - v === 0)) bad[j] = 1; }
  }
  // Pooled columns holding one value only: t is 0/0 for every labelling (the centred values need
  // not be exactly equal, so this is decided on the raw values).
  const flat = new Uint8Array(cols);
  if (design === 'independent') {
    for (let j = 0; j < cols; j++) {
      const v0 = y[j]!;
      let same = 1;
      for (let i = 1; i < n && same; i++) if (y[i * cols + j] !== v0) same = 0;
      flat[j] = same;
    }
  }
  // Centre pooled columns (independent) so that sums of squares keep their accuracy.
  let y2: Float64Array | null = null;
  const sum = new Float64Array(cols);
  const sumSq = new Float64Array(cols);
  if (design === 'independent') {
    const mean = new Float64Array(cols);
    for (let i = 0; i < n; i++) for (let j = 0; j < cols; j++) mean[j]! += y[i * cols + j]!;
    for (let j = 0; j < cols; j++) mean[j]! /= n;
    y2 = new Float64Array(n * cols);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < cols; j++) {
        const d = y[i * cols + j]! - mean[j]!;
        y[i * cols + j] = d;
        y2[i * cols + j] = d * d;
        sum[j]! += d;
        sumSq[j]! += d * d;
      }
    }
  } else {
    for (let i = 0; i < n; i++) for (let j = 0; j < cols; j++) { const v = y[i * cols + j]!; sumSq[j]! += v * v; }
  }

  // The plan of labellings.
  const enumeration = design === 'independent' ? chooseUpTo(n, n1, permutations) : n <= 52 && 2 ** n <= permutations ? 2 ** n : Infinity;
  const exact = enumeration <= permutations;
  const rows = exact ? enumeration : permutations + 1;
  const plan = new CountPlan(rows, n);
  const counts = new Int32Array(n);
  if (design === 'independent') {
    const idx = new Int32Array(n1);
    for (let i = 0; i < n1; i++) idx[i] = i;
    const perm = new Int32Array(n);
    for (let r = 0; r < rows; r++) {
      counts.fill(0);
      if (exact || r === 0) {
        for (let i = 0; i < n1; i++) counts[idx[i]!] = 1;
        if (exact) nextCombination(idx, n);
      } else {
        // Partial Fisher–Yates: the first n1 of a random permutation form group a.
        for (let i = 0; i < n; i++) perm[i] = i;
        for (let i = 0; i < n1; i++) {
          const j = i + rng.int(n - i);
          const t = perm[i]!; perm[i] = perm[j]!; perm[j] = t;
          counts[perm[i]!] = 1;
        }
      }
      plan.set(r, counts);
    }
  } else {
    for (let r = 0; r < rows; r++) {
      // counts[i] = 1 keeps row i's sign (+), 0 flips it. Exact: bit i of r flips row i.
      if (exact) {
        for (let i = 0; i < n; i++) counts[i] = (r / 2 ** i) % 2 >= 1 ? 0 : 1;
      } else if (r === 0) {
        counts.fill(1);
      } else {
        let bits = 0;
        for (let i = 0; i < n; i++) {
          if ((i & 31) === 0) bits = rng.nextUint32();
          counts[i] = (bits >>> (i & 31)) & 1;
        }
      }
      plan.set(r, counts);
    }
  }
  const df = design === 'independent' ? n - 2 : n - 1;
  const n2 = n - n1;

  return {
    design, cols, rows, exact, df, bad,
    forEachBlock(visit) {
      const table = makeTable(plan.groups);
      const s = new Float64Array(BLOCK * rows);
      const q = y2 ? new Float64Array(BLOCK * rows) : null;
      const t = new Float64Array(BLOCK * rows);
      for (let c0 = 0; c0 < cols; c0 += BLOCK) {
        const width = Math.min(BLOCK, cols - c0);
        weightedBlock(plan, y, cols, c0, width, table, s);
        if (y2) weightedBlock(plan, y2, cols, c0, width, table, q!);
        for (let jj = 0; jj < width; jj++) {
          const j = c0 + jj;
          const base = jj * rows;
          if (bad[j] || flat[j]) { t.fill(NaN, base, base + rows); continue; }
          if (design === 'independent') {
            const st = sum[j]!;
            const qt = sumSq[j]!;
            const floor = zeroSpreadFloor(n, qt);
            for (let r = 0; r < rows; r++) {
              const sa = s[base + r]!;
              const qa = q![base + r]!;
              const sb = st - sa;
              const ssa = qa - (sa * sa) / n1;
              const ssb = qt - qa - (sb * sb) / n2;
              const ssw = ssa + ssb;
              const sp2 = (ssw <= floor ? 0 : ssw) / (n - 2);
              t[base + r] = (sa / n1 - sb / n2) / Math.sqrt(sp2 * (1 / n1 + 1 / n2));
            }
          } else {
            // Σ sᵢyᵢ = 2·Σ_{kept} y − Σ_all y, with Σ_all y from the identity row (same arithmetic).
            const total = s[base]!;
            const qj = sumSq[j]!;
            const floor = zeroSpreadFloor(n, qj);
            for (let r = 0; r < rows; r++) {
              const m = (2 * s[base + r]! - total) / n;
              const ss = qj - n * m * m;
              const v = (ss <= floor ? 0 : ss) / (n - 1);
              t[base + r] = m / Math.sqrt(v / n);
            }
          }
        }
        visit(c0, width, t);
      }
    },
  };
}

/** Next k-subset of {0..n−1} in lexicographic order (in place); returns false after the last. */
function nextCombination(idx: Int32Array, n: number): boolean {
  const k = idx.length;
  let i = k - 1;
  while (i >= 0 && idx[i] === n - k + i) i--;
  if (i < 0) return false;
  idx[i]!++;
  for (let j = i + 1; j < k; j++) idx[j] = idx[j - 1]! + 1;
  return true;
}

/** Relative tolerance for "null ≥ observed", so equal statistics reached by different
 * summation orders count as ties (scipy uses 100·eps; table sums need a little more). */
export const TIE_TOLERANCE = 1e-10;

/**
 * Absolute tie tolerance for an observed statistic x: TIE_TOLERANCE·|x|, and 0 for x = ±∞ (where
 * the relative rule would give ∞ − ∞ = NaN and no labelling, not even the observed one, would tie).
 */
export function tieTolerance(x: number): number {
  return x - x === 0 ? TIE_TOLERANCE * Math.abs(x) : 0;
}

/**
 * Sums of squared deviations at or below this are rounding noise of a zero spread: Σy² − n·ȳ²
 * (or the pooled within-group sum) of n values whose squares sum to `sumSq` carries a rounding
 * error of order n·ε·sumSq (Higham, N. J. (2002). Accuracy and Stability of Numerical Algorithms,
 * 2nd ed., SIAM, §4.2), so a labelling whose values are all equal gives
 * exactly 0 (t = ±∞ for a non-zero mean difference) instead of a rounding-dependent huge t or NaN.
 */
function zeroSpreadFloor(n: number, sumSq: number): number {
  return 2 * n * Number.EPSILON * sumSq;
}

export function checkDesign(fn: string, design: Design, a: Matrix, b: Matrix | null): void {
  if (design === 'paired' && a.rows !== b!.rows) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: design 'paired' needs one row of b per row of a, got ${a.rows} and ${b!.rows} rows.`, { fn, rows: [a.rows, b!.rows] });
  }
}
